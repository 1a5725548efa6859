/**
 * The Gram / cross-product kernel of the kernel layer: out[a][b] = out[b][a] =
 * sum_t x_a[t] y_b[t] for b >= a over q series of length T (x = y: a Gram matrix).
 *
 * Every entry is ONE function of its two series, whichever route computes it: four
 * partial sums s_r = sum over t = r (mod 4), t < T4 = T - T mod 4, in order of t; the
 * last T mod 4 products added to s_0 in order; the entry is ((s_0 + s_1) + s_2) + s_3.
 * `seriesDot` (matrix.ts) is that function, and both routes below give its bits exactly:
 *
 * - WebAssembly SIMD (`wasmGram`, where the engine has it, for q >= 8 and T >= 16): the
 *   series are copied into linear memory; a 2 x 2 block of entries keeps its partial sums
 *   in eight f64x2 registers (lanes (s_0, s_1) and (s_2, s_3)), so each pass over four
 *   periods does 16 multiply-adds for eight vector loads (register blocking); rows of x
 *   are taken BLOCK_ROWS at a time and periods CHUNK at a time, the partial sums parked
 *   in memory between chunks without changing their order (cache blocking: a chunk of a
 *   block of x, 256 kB, stays in the second-level cache while every y passes by, and a
 *   pair of y chunks, 8 kB, in the first while the block's rows pass). Products and sums
 *   are f64x2.mul and f64x2.add: each lane rounds as JavaScript's `*` and `+` do.
 * - plain JavaScript (`jsGram`), two rows at a time, elsewhere.
 *
 * Measured (bench/kernels.ts, `npm run bench -- kernels`) against OpenBLAS through numpy.
 */
import { Code, F64, I32, moduleBytes, V128, wasmApi, type WasmMemory } from './wasm.js';

/** Rows of x per block (even), periods per chunk (a multiple of 4). */
const BLOCK_ROWS = 64;
const CHUNK = 512;

/**
 * gramBlock: the partial sums of the block's entries over one chunk of periods, added to
 * those parked in memory at acc (wasmGramOf calls it once per chunk, the rows' addresses
 * moved on to the chunk's first period).
 */
function kernelCode(): Code {
  // params: 0 x, 1 y, 2 rowBytes, 3 qPad, 4 tb (the chunk's periods, in bytes), 5 acc, 6 a0, 7 a1
  const [x, y, rowBytes, qPad, tb, acc, a0, a1] = [0, 1, 2, 3, 4, 5, 6, 7];
  // i32 locals
  const [b, a, o, px0, px1, py0, py1, pacc, pacc1, accRow] = [8, 9, 10, 11, 12, 13, 14, 15, 16, 17];
  // v128 locals: accumulators c[ab][lane pair] and loads
  const c = [18, 19, 20, 21, 22, 23, 24, 25]; // c00a c00b c01a c01b c10a c10b c11a c11b
  const [x0a, x0b, x1a, x1b, y0a, y0b, y1a, y1b] = [26, 27, 28, 29, 30, 31, 32, 33];
  const k = new Code();
  k.get(qPad).i32(32).mul().set(accRow);
  k.get(a0).set(b);
  k.block().loop(); // b pairs
  k.get(b).get(qPad).geS().brIf(1);
  k.get(y).get(b).get(rowBytes).mul().add().tee(py0).get(rowBytes).add().set(py1);
  k.get(a0).set(a);
  k.block().loop(); // a pairs of the block, a <= b
  k.get(a).get(a1).geS().brIf(1);
  k.get(a).get(b).gtS().brIf(1);
  k.get(x).get(a).get(rowBytes).mul().add().tee(px0).get(rowBytes).add().set(px1);
  k.get(acc).get(a).get(a0).sub().get(accRow).mul().add().get(b).i32(32).mul().add().tee(pacc).get(accRow).add().set(pacc1);
  // entries (a, b), (a, b+1) at pacc; (a+1, b), (a+1, b+1) at pacc1
  k.get(pacc).vload(0).set(c[0]).get(pacc).vload(16).set(c[1]).get(pacc).vload(32).set(c[2]).get(pacc).vload(48).set(c[3]);
  k.get(pacc1).vload(0).set(c[4]).get(pacc1).vload(16).set(c[5]).get(pacc1).vload(32).set(c[6]).get(pacc1).vload(48).set(c[7]);
  k.i32(0).set(o);
  k.block().loop(); // four periods per pass
  k.get(o).get(tb).geS().brIf(1);
  k.get(px0).get(o).add().vload(0).set(x0a).get(px0).get(o).add().vload(16).set(x0b);
  k.get(px1).get(o).add().vload(0).set(x1a).get(px1).get(o).add().vload(16).set(x1b);
  k.get(py0).get(o).add().vload(0).set(y0a).get(py0).get(o).add().vload(16).set(y0b);
  k.get(py1).get(o).add().vload(0).set(y1a).get(py1).get(o).add().vload(16).set(y1b);
  const fma = (acc: number, u: number, v: number) => k.get(acc).get(u).get(v).f64x2mul().f64x2add().set(acc);
  fma(c[0], x0a, y0a);
  fma(c[1], x0b, y0b);
  fma(c[2], x0a, y1a);
  fma(c[3], x0b, y1b);
  fma(c[4], x1a, y0a);
  fma(c[5], x1b, y0b);
  fma(c[6], x1a, y1a);
  fma(c[7], x1b, y1b);
  k.get(o).i32(32).add().set(o);
  k.br(0).end().end();
  k.get(pacc).get(c[0]).vstore(0).get(pacc).get(c[1]).vstore(16).get(pacc).get(c[2]).vstore(32).get(pacc).get(c[3]).vstore(48);
  k.get(pacc1).get(c[4]).vstore(0).get(pacc1).get(c[5]).vstore(16).get(pacc1).get(c[6]).vstore(32).get(pacc1).get(c[7]).vstore(48);
  k.get(a).i32(2).add().set(a);
  k.br(0).end().end();
  k.get(b).i32(2).add().set(b);
  k.br(0).end().end();
  return k;
}

/**
 * demean(p, T): the T values at byte address p minus their mean, in place: the sum in order
 * of t (s = s + x_t from s = 0), divided by T, subtracted from each value. The same
 * operations in the same order as longRunCovariance's demeanInto, so the same bits.
 */
function demeanCode(): Code {
  const [p, T, end, q, s, m] = [0, 1, 2, 3, 4, 5];
  const k = new Code();
  k.get(p).get(T).i32(8).mul().add().set(end);
  k.f64(0).set(s);
  k.get(p).set(q);
  k.block().loop();
  k.get(q).get(end).geS().brIf(1);
  k.get(s).get(q).fload().fadd().set(s);
  k.get(q).i32(8).add().set(q);
  k.br(0).end().end();
  k.get(s).get(T).fromI32().fdiv().set(m);
  k.get(p).set(q);
  k.block().loop();
  k.get(q).get(end).geS().brIf(1);
  k.get(q).get(q).fload().get(m).fsub().fstore();
  k.get(q).i32(8).add().set(q);
  k.br(0).end().end();
  return k;
}

/**
 * bartlett(v, x, w, L, T): v_s = x_s + sum_{j=1..L} w_j x_{s-j} + w_j x_{s+j} (terms outside
 * 0..T-1 dropped), for each j the lag term then the lead term, each product rounded and then
 * added: the order of longRunCovariance's bartlettInto, so the same bits. v, x, w are byte
 * addresses (w holds w_0..w_L).
 */
function bartlettCode(): Code {
  const [v, x, w, L, T, s, j, idx, acc, wj] = [0, 1, 2, 3, 4, 5, 6, 7, 8, 9];
  const k = new Code();
  k.i32(0).set(s);
  k.block().loop(); // periods s
  k.get(s).get(T).geS().brIf(1);
  k.get(x).get(s).i32(8).mul().add().fload().set(acc);
  k.i32(1).set(j);
  k.block().loop(); // lags j
  k.get(j).get(L).gtS().brIf(1);
  k.get(w).get(j).i32(8).mul().add().fload().set(wj);
  k.block(); // the lag term, where s - j >= 0
  k.get(s).get(j).sub().tee(idx).i32(0).ltS().brIf(0);
  k.get(acc).get(wj).get(x).get(idx).i32(8).mul().add().fload().fmul().fadd().set(acc);
  k.end();
  k.block(); // the lead term, where s + j < T
  k.get(s).get(j).add().tee(idx).get(T).geS().brIf(0);
  k.get(acc).get(wj).get(x).get(idx).i32(8).mul().add().fload().fmul().fadd().set(acc);
  k.end();
  k.get(j).i32(1).add().set(j);
  k.br(0).end().end();
  k.get(v).get(s).i32(8).mul().add().get(acc).fstore();
  k.get(s).i32(1).add().set(s);
  k.br(0).end().end();
  return k;
}

type GramBlock = (x: number, y: number, rowBytes: number, qPad: number, tb: number, acc: number, a0: number, a1: number) => void;

interface Kernel {
  memory: WasmMemory;
  gramBlock: GramBlock;
  demean: (p: number, T: number) => void;
  bartlett: (v: number, x: number, w: number, L: number, T: number) => void;
}

let kernel: Kernel | null | undefined;

/** The compiled kernel, or null where WebAssembly (with SIMD) is not available. */
function loadKernel(): Kernel | null {
  if (kernel !== undefined) return kernel;
  kernel = null;
  const api = wasmApi();
  if (!api) return kernel;
  try {
    const bytes = moduleBytes([
      { name: 'gramBlock', params: Array(8).fill(I32), locals: [...Array(10).fill(I32), ...Array(16).fill(V128)], code: kernelCode() },
      { name: 'demean', params: [I32, I32], locals: [I32, I32, F64, F64], code: demeanCode() },
      { name: 'bartlett', params: Array(5).fill(I32), locals: [I32, I32, I32, F64, F64], code: bartlettCode() },
    ]);
    if (!api.validate(bytes)) return kernel;
    const memory = new api.Memory({ initial: 1 });
    const inst = new api.Instance(new api.Module(bytes), { env: { memory } });
    kernel = { memory, gramBlock: inst.exports.gramBlock as GramBlock, demean: inst.exports.demean as Kernel['demean'], bartlett: inst.exports.bartlett as Kernel['bartlett'] };
  } catch {
    kernel = null;
  }
  return kernel;
}

/** Which route the products take here: 'wasm-simd128' or 'js'. Recorded with each run as part of the kernel identity. */
export function gramRoute(): 'wasm-simd128' | 'js' {
  return loadKernel() ? 'wasm-simd128' : 'js';
}

/** Test hook: force the plain JavaScript route (true) or let the engine decide (false). */
let forceJs = false;
export function useJsKernels(on: boolean): void {
  forceJs = on;
}

/** The entry function: sum_t x[t] y[t] with four partial sums (see the file comment). */
export function seriesDot(x: Float64Array, y: Float64Array): number {
  const n = x.length;
  let s0 = 0;
  let s1 = 0;
  let s2 = 0;
  let s3 = 0;
  let t = 0;
  for (; t + 3 < n; t += 4) {
    s0 += x[t] * y[t];
    s1 += x[t + 1] * y[t + 1];
    s2 += x[t + 2] * y[t + 2];
    s3 += x[t + 3] * y[t + 3];
  }
  for (; t < n; t++) s0 += x[t] * y[t];
  return s0 + s1 + s2 + s3;
}

/** Plain JavaScript route: rows two at a time, so each pass over y_b serves two sums. */
export function jsGram(x: readonly Float64Array[], y: readonly Float64Array[]): Float64Array {
  const q = x.length;
  const out = new Float64Array(q * q);
  const put = (a: number, b: number, s: number) => {
    out[a * q + b] = s;
    out[b * q + a] = s;
  };
  let a = 0;
  for (; a + 1 < q; a += 2) {
    const x0 = x[a];
    const x1 = x[a + 1];
    put(a, a, seriesDot(x0, y[a]));
    for (let b = a + 1; b < q; b++) {
      const yb = y[b];
      const n = yb.length;
      let s0 = 0;
      let s1 = 0;
      let s2 = 0;
      let s3 = 0;
      let r0 = 0;
      let r1 = 0;
      let r2 = 0;
      let r3 = 0;
      let t = 0;
      for (; t + 3 < n; t += 4) {
        const y0 = yb[t];
        const y1 = yb[t + 1];
        const y2 = yb[t + 2];
        const y3 = yb[t + 3];
        s0 += x0[t] * y0;
        s1 += x0[t + 1] * y1;
        s2 += x0[t + 2] * y2;
        s3 += x0[t + 3] * y3;
        r0 += x1[t] * y0;
        r1 += x1[t + 1] * y1;
        r2 += x1[t + 2] * y2;
        r3 += x1[t + 3] * y3;
      }
      for (; t < n; t++) {
        s0 += x0[t] * yb[t];
        r0 += x1[t] * yb[t];
      }
      put(a, b, s0 + s1 + s2 + s3);
      put(a + 1, b, r0 + r1 + r2 + r3);
    }
  }
  if (a < q) put(a, a, seriesDot(x[a], y[a]));
  return out;
}

const PAGE = 65536;

function ensure(memory: WasmMemory, bytes: number): void {
  const have = memory.buffer.byteLength;
  if (bytes > have) memory.grow(Math.ceil((bytes - have) / PAGE));
}

/** WebAssembly SIMD route (see the file comment); null when it does not apply. */
export function wasmGram(x: readonly Float64Array[], y: readonly Float64Array[]): Float64Array | null {
  const q = x.length;
  if (q < 8 || y.length !== q) return null;
  const T = x[0].length;
  for (let a = 0; a < q; a++) if (x[a].length !== T || y[a].length !== T) return null;
  const same = x === y || x.every((s, i) => s === y[i]);
  return wasmGramOf(q, T, same, (a, xa, ya) => {
    xa.set(x[a]);
    if (ya) ya.set(y[a]);
  });
}

/**
 * Row operations in the kernel's memory, for a `fill` of wasmGramOf: compiled WebAssembly
 * from the first call (no interpreted warm-up), the same bits as the JavaScript loops they
 * stand for (see demeanCode and bartlettCode). Every array passed must be one of the rows
 * or the scratch of that call.
 */
export interface KernelRows {
  /** `scratch` values (wasmGramOf's last argument) in the kernel's memory, for the caller's own use. */
  readonly scratch: Float64Array;
  /** row minus its mean, in place. */
  demean(row: Float64Array): void;
  /** v = x filtered with the Bartlett weights w (w_0..w_lags). */
  bartlett(v: Float64Array, x: Float64Array, w: Float64Array, lags: number): void;
}

/**
 * The same products of q series pairs of length T that `fill` writes straight into the
 * kernel's memory (no copy of them on the JavaScript heap): fill(a, x_a, y_a, rows) writes
 * x_a and y_a (y_a is null when `same`: y = x), with the kernel's row operations at hand.
 * The same bits as wasmGram of the same series; null where the WebAssembly route does not
 * apply (the caller then takes jsGram).
 */
export function wasmGramOf(q: number, T: number, same: boolean, fill: (a: number, x: Float64Array, y: Float64Array | null, rows: KernelRows) => void, scratch = 0): Float64Array | null {
  const k = forceJs ? null : loadKernel();
  if (!k || q < 8 || T < 16) return null;
  const qPad = q + (q & 1);
  const rowBytes = T * 8;
  const xOff = 0;
  const yOff = same ? xOff : qPad * rowBytes;
  const accOff = yOff + qPad * rowBytes;
  const accBytes = BLOCK_ROWS * qPad * 32;
  const scratchOff = accOff + accBytes;
  const total = scratchOff + scratch * 8;
  if (total > 2 ** 31 - PAGE) return null;
  ensure(k.memory, total);
  const heap = new Float64Array(k.memory.buffer);
  const row = (off: number, a: number) => heap.subarray(off / 8 + a * T, off / 8 + (a + 1) * T);
  const inKernel = (...arrays: Float64Array[]) => {
    for (const x of arrays) if (x.buffer !== heap.buffer) throw new RangeError('wasmGramOf: a row operation was given an array outside the kernel memory');
  };
  const rows: KernelRows = {
    scratch: heap.subarray(scratchOff / 8, scratchOff / 8 + scratch),
    demean(r) {
      inKernel(r);
      k.demean(r.byteOffset, r.length);
    },
    bartlett(v, x, w, lags) {
      inKernel(v, x, w);
      if (v.length !== x.length || w.length < lags + 1) throw new RangeError('wasmGramOf: bartlett needs v and x of one length and lags + 1 weights');
      k.bartlett(v.byteOffset, x.byteOffset, w.byteOffset, lags, x.length);
    },
  };
  const xs: Float64Array[] = new Array(q);
  const ys: Float64Array[] = new Array(q);
  for (let a = 0; a < q; a++) {
    xs[a] = row(xOff, a);
    ys[a] = same ? xs[a] : row(yOff, a);
    fill(a, xs[a], same ? null : ys[a], rows);
  }
  if (qPad > q) {
    heap.fill(0, xOff / 8 + q * T, xOff / 8 + qPad * T);
    if (!same) heap.fill(0, yOff / 8 + q * T, yOff / 8 + qPad * T);
  }
  const T4 = T - (T % 4);
  const out = new Float64Array(q * q);
  const accBase = accOff / 8;
  for (let a0 = 0; a0 < qPad; a0 += BLOCK_ROWS) {
    const a1 = Math.min(qPad, a0 + BLOCK_ROWS);
    heap.fill(0, accBase, accBase + (a1 - a0) * qPad * 4);
    // One call per chunk of periods (the rows' addresses moved on by t0 periods), the partial
    // sums waiting in memory between calls. Short calls also let the engine move the kernel
    // from its baseline compile to its optimised one while a large product runs (a call that
    // has started stays in the code it started in).
    for (let t0 = 0; t0 < T4; t0 += CHUNK) k.gramBlock(xOff + t0 * 8, yOff + t0 * 8, rowBytes, qPad, Math.min(CHUNK, T4 - t0) * 8, accOff, a0, a1);
    for (let a = a0; a < Math.min(a1, q); a++) {
      const xa = xs[a];
      const rowAcc = accBase + (a - a0) * qPad * 4;
      for (let b = a; b < q; b++) {
        const e = rowAcc + b * 4;
        let s0 = heap[e];
        const yb = ys[b];
        for (let t = T4; t < T; t++) s0 += xa[t] * yb[t];
        const s = s0 + heap[e + 1] + heap[e + 2] + heap[e + 3];
        out[a * q + b] = s;
        out[b * q + a] = s;
      }
    }
  }
  return out;
}

/** The symmetric q x q products of the kernel (WebAssembly SIMD where available, else JavaScript). */
export function gram(x: readonly Float64Array[], y: readonly Float64Array[]): Float64Array {
  return wasmGram(x, y) ?? jsGram(x, y);
}
