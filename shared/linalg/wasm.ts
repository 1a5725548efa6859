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

/** Function body writer: each method appends one instruction. */
export class Code {
  private buf = new Uint8Array(1024);
  private n = 0;
  /** The body's bytes so far. */
  get bytes(): Uint8Array {
    return this.buf.subarray(0, this.n);
  }
  /*
   * Each byte written in place (no argument lists spread into arrays): the module is encoded
   * at run time, on code V8 has not compiled yet, where a spread per instruction made a 2 kB
   * body cost several milliseconds.
   */
  /** Room for `extra` more bytes. */
  private reserve(extra: number): void {
    if (this.n + extra <= this.buf.length) return;
    const grown = new Uint8Array(Math.max(this.buf.length * 2, this.n + extra));
    grown.set(this.buf.subarray(0, this.n));
    this.buf = grown;
  }
  /** One byte as it is. */
  raw(b: number): this {
    this.reserve(1);
    this.buf[this.n++] = b;
    return this;
  }
  /** An unsigned LEB128 number: a count, an index, a size or an immediate. */
  count(v: number): this {
    do {
      let b = v & 0x7f;
      v >>>= 7;
      if (v !== 0) b |= 0x80;
      this.raw(b);
    } while (v !== 0);
    return this;
  }
  /** Bytes as they are. */
  append(b: Uint8Array): this {
    this.reserve(b.length);
    this.buf.set(b, this.n);
    this.n += b.length;
    return this;
  }
  private sleb(v: number): this {
    for (;;) {
      const b = v & 0x7f;
      v >>= 7;
      if ((v === 0 && (b & 0x40) === 0) || (v === -1 && (b & 0x40) !== 0)) return this.raw(b);
      this.raw(b | 0x80);
    }
  }
  get(i: number): this {
    return this.raw(0x20).count(i);
  }
  set(i: number): this {
    return this.raw(0x21).count(i);
  }
  tee(i: number): this {
    return this.raw(0x22).count(i);
  }
  i32(v: number): this {
    return this.raw(0x41).sleb(v);
  }
  add(): this {
    return this.raw(0x6a);
  }
  sub(): this {
    return this.raw(0x6b);
  }
  mul(): this {
    return this.raw(0x6c);
  }
  ltS(): this {
    return this.raw(0x48);
  }
  geS(): this {
    return this.raw(0x4e);
  }
  gtS(): this {
    return this.raw(0x4a);
  }
  select(): this {
    return this.raw(0x1b);
  }
  /** block with no result; the matching end() closes it. */
  block(): this {
    return this.raw(0x02).raw(0x40);
  }
  loop(): this {
    return this.raw(0x03).raw(0x40);
  }
  br(depth: number): this {
    return this.raw(0x0c).count(depth);
  }
  brIf(depth: number): this {
    return this.raw(0x0d).count(depth);
  }
  end(): this {
    return this.raw(0x0b);
  }
  /** v128.load (address on the stack) at a constant byte offset; alignment hint 8 bytes. */
  vload(offset = 0): this {
    return this.raw(0xfd).raw(0x00).raw(0x03).count(offset);
  }
  /** v128.store (address, value on the stack) at a constant byte offset. */
  vstore(offset = 0): this {
    return this.raw(0xfd).raw(0x0b).raw(0x03).count(offset);
  }
  f64x2add(): this {
    return this.raw(0xfd).count(240);
  }
  f64x2mul(): this {
    return this.raw(0xfd).count(242);
  }
  /** f64.load (address on the stack) at a constant byte offset; alignment hint 8 bytes. */
  fload(offset = 0): this {
    return this.raw(0x2b).raw(0x03).count(offset);
  }
  /** f64.store (address, value on the stack) at a constant byte offset. */
  fstore(offset = 0): this {
    return this.raw(0x39).raw(0x03).count(offset);
  }
  /** f64.const: the eight bytes of the value, little-endian. */
  f64(v: number): this {
    return this.raw(0x44).append(new Uint8Array(Float64Array.of(v).buffer));
  }
  fadd(): this {
    return this.raw(0xa0);
  }
  fsub(): this {
    return this.raw(0xa1);
  }
  fmul(): this {
    return this.raw(0xa2);
  }
  fdiv(): this {
    return this.raw(0xa3);
  }
  /** f64.convert_i32_s */
  fromI32(): this {
    return this.raw(0xb7);
  }
  /** memory.fill (dest, value, size on the stack). */
  memfill(): this {
    return this.raw(0xfc).count(11).raw(0x00);
  }
}

export interface FunctionDef {
  name: string;
  params: number[];
  /** Extra locals (after the parameters), by type. */
  locals: number[];
  code: Code;
}

/** A module importing one memory ("env", "memory") and exporting the functions (no results). */
export function moduleBytes(fns: FunctionDef[]): Uint8Array {
  const out = new Code();
  const section = (id: number, body: Code) => out.raw(id).count(body.bytes.length).append(body.bytes);
  const name = (w: Code, s: string) => {
    w.count(s.length);
    for (let i = 0; i < s.length; i++) w.raw(s.charCodeAt(i));
  };
  out.append(Uint8Array.of(0x00, 0x61, 0x73, 0x6d, 0x01, 0x00, 0x00, 0x00));
  const types = new Code().count(fns.length);
  for (const f of fns) {
    types.raw(0x60).count(f.params.length);
    for (const t of f.params) types.raw(t);
    types.raw(0x00);
  }
  section(1, types);
  const imports = new Code().count(1);
  name(imports, 'env');
  name(imports, 'memory');
  imports.raw(0x02).raw(0x00).raw(0x01);
  section(2, imports);
  const funcs = new Code().count(fns.length);
  for (let i = 0; i < fns.length; i++) funcs.count(i);
  section(3, funcs);
  const exports = new Code().count(fns.length);
  fns.forEach((f, i) => {
    name(exports, f.name);
    exports.raw(0x00).count(i);
  });
  section(7, exports);
  const bodies = new Code().count(fns.length);
  for (const f of fns) {
    const groups: [number, number][] = [];
    for (const t of f.locals) {
      const last = groups[groups.length - 1];
      if (last && last[1] === t) last[0]++;
      else groups.push([1, t]);
    }
    const body = new Code().count(groups.length);
    for (const [n, t] of groups) body.count(n).raw(t);
    body.append(f.code.bytes).raw(0x0b);
    bodies.count(body.bytes.length).append(body.bytes);
  }
  section(10, bodies);
  return out.bytes.slice();
}
