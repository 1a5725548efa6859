/**
 * A minimal WebAssembly module writer for the kernel layer's SIMD products, and the
 * WebAssembly API as far as shared/ uses it (shared/ compiles without DOM or Node types).
 *
 * Only the opcodes the kernels use are here. The module is encoded at run time from the
 * code in ./gramKernel.ts (no binary blob in the repository) and instantiated
 * synchronously (it is a few hundred bytes).
 *
 * Exactness: the kernels use f64x2.mul and f64x2.add only, which round every lane exactly
 * as the scalar `*` and `+` of JavaScript do (IEEE 754 binary64, round to nearest even),
 * never a fused multiply-add (relaxed SIMD would let the engine choose, and the bits
 * would then depend on the machine). A kernel that adds in the same order as the scalar
 * code therefore gives the same bits, on every machine.
 */

/** The part of the WebAssembly JS API the kernel layer needs. */
export interface WasmMemory {
  readonly buffer: ArrayBuffer;
  grow(pages: number): number;
}
interface WasmApi {
  Module: new (bytes: Uint8Array) => object;
  Instance: new (module: object, imports: Record<string, Record<string, unknown>>) => { exports: Record<string, unknown> };
  Memory: new (d: { initial: number; maximum?: number }) => WasmMemory;
  validate(bytes: Uint8Array): boolean;
}

/** The engine's WebAssembly, or null where there is none. */
export function wasmApi(): WasmApi | null {
  const w = (globalThis as { WebAssembly?: WasmApi }).WebAssembly;
  return w && typeof w.Module === 'function' ? w : null;
}

export const I32 = 0x7f;
export const F64 = 0x7c;
export const V128 = 0x7b;

function uleb(n: number): number[] {
  const out: number[] = [];
  do {
    let b = n & 0x7f;
    n >>>= 7;
    if (n !== 0) b |= 0x80;
    out.push(b);
  } while (n !== 0);
  return out;
}

function sleb(n: number): number[] {
  const out: number[] = [];
  for (;;) {
    const b = n & 0x7f;
    n >>= 7;
    if ((n === 0 && (b & 0x40) === 0) || (n === -1 && (b & 0x40) !== 0)) {
      out.push(b);
      return out;
    }
    out.push(b | 0x80);
  }
}

/** Function body writer: each method appends one instruction. */
export class Code {
  readonly bytes: number[] = [];
  private op(...b: number[]): this {
    this.bytes.push(...b);
    return this;
  }
  get(i: number): this {
    return this.op(0x20, ...uleb(i));
  }
  set(i: number): this {
    return this.op(0x21, ...uleb(i));
  }
  tee(i: number): this {
    return this.op(0x22, ...uleb(i));
  }
  i32(v: number): this {
    return this.op(0x41, ...sleb(v));
  }
  add(): this {
    return this.op(0x6a);
  }
  sub(): this {
    return this.op(0x6b);
  }
  mul(): this {
    return this.op(0x6c);
  }
  ltS(): this {
    return this.op(0x48);
  }
  geS(): this {
    return this.op(0x4e);
  }
  gtS(): this {
    return this.op(0x4a);
  }
  select(): this {
    return this.op(0x1b);
  }
  /** block with no result; the matching end() closes it. */
  block(): this {
    return this.op(0x02, 0x40);
  }
  loop(): this {
    return this.op(0x03, 0x40);
  }
  br(depth: number): this {
    return this.op(0x0c, ...uleb(depth));
  }
  brIf(depth: number): this {
    return this.op(0x0d, ...uleb(depth));
  }
  end(): this {
    return this.op(0x0b);
  }
  /** v128.load (address on the stack) at a constant byte offset; alignment hint 8 bytes. */
  vload(offset = 0): this {
    return this.op(0xfd, 0x00, 0x03, ...uleb(offset));
  }
  /** v128.store (address, value on the stack) at a constant byte offset. */
  vstore(offset = 0): this {
    return this.op(0xfd, 0x0b, 0x03, ...uleb(offset));
  }
  f64x2add(): this {
    return this.op(0xfd, ...uleb(240));
  }
  f64x2mul(): this {
    return this.op(0xfd, ...uleb(242));
  }
  /** memory.fill (dest, value, size on the stack). */
  memfill(): this {
    return this.op(0xfc, ...uleb(11), 0x00);
  }
}

export interface FunctionDef {
  name: string;
  params: number[];
  /** Extra locals (after the parameters), by type. */
  locals: number[];
  code: Code;
}

function section(id: number, body: number[]): number[] {
  return [id, ...uleb(body.length), ...body];
}

function vec(items: number[][]): number[] {
  return [...uleb(items.length), ...items.flat()];
}

function name(s: string): number[] {
  const b = Array.from(s, (c) => c.charCodeAt(0));
  return [...uleb(b.length), ...b];
}

/** A module importing one memory ("env", "memory") and exporting the functions (no results). */
export function moduleBytes(fns: FunctionDef[]): Uint8Array {
  const types = vec(fns.map((f) => [0x60, ...uleb(f.params.length), ...f.params, 0x00]));
  const imports = vec([[...name('env'), ...name('memory'), 0x02, 0x00, 0x01]]);
  const funcs = vec(fns.map((_, i) => uleb(i)));
  const exports = vec(fns.map((f, i) => [...name(f.name), 0x00, ...uleb(i)]));
  const bodies = vec(
    fns.map((f) => {
      const groups: number[][] = [];
      for (const t of f.locals) {
        const last = groups[groups.length - 1];
        if (last && last[1] === t) last[0]++;
        else groups.push([1, t]);
      }
      const body = [...vec(groups.map(([n, t]) => [...uleb(n), t])), ...f.code.bytes, 0x0b];
      return [...uleb(body.length), ...body];
    }),
  );
  return Uint8Array.from([0x00, 0x61, 0x73, 0x6d, 0x01, 0x00, 0x00, 0x00, ...section(1, types), ...section(2, imports), ...section(3, funcs), ...section(7, exports), ...section(10, bodies)]);
}
