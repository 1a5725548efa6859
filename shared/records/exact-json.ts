/**
 * JSON that keeps every double bit for bit. Plain JSON.stringify already writes the
 * shortest decimal that reads back as the same double (ECMA-262 Number::toString), but
 * it turns -0 into 0, NaN and Infinity into null and a Float64Array into an object with
 * string keys. Here those become tagged objects that parse back to what was written:
 *
 *   -0            -> {"$num":"-0"}
 *   NaN, ±Infinity -> {"$num":"NaN"} / {"$num":"Infinity"} / {"$num":"-Infinity"}
 *   Float64Array  -> {"$f64":[...]}  (elements encoded the same way)
 *
 * Results never hold NaN or Infinity (DEVELOPERS.md), but a stored record must show
 * what was computed rather than rewrite it. Keys starting with "$" are reserved.
 */

type Json = null | boolean | number | string | Json[] | { [k: string]: Json };

function tagNumber(x: number): Json {
  if (Object.is(x, -0)) return { $num: '-0' };
  if (Number.isFinite(x)) return x;
  return { $num: String(x) };
}

/** The JSON-safe tree of a value (undefined members and functions dropped, as JSON does). */
export function toExactJson(value: unknown): Json {
  if (value === null || value === undefined) return null;
  if (typeof value === 'number') return tagNumber(value);
  if (typeof value === 'string' || typeof value === 'boolean') return value;
  if (value instanceof Float64Array || value instanceof Float32Array) return { $f64: Array.from(value, tagNumber) };
  if (ArrayBuffer.isView(value)) return Array.from(value as unknown as ArrayLike<number>, tagNumber);
  if (Array.isArray(value)) return value.map((v) => (v === undefined || typeof v === 'function' ? null : toExactJson(v)));
  if (typeof value === 'object') {
    const out: { [k: string]: Json } = {};
    for (const [k, v] of Object.entries(value as Record<string, unknown>)) {
      if (v === undefined || typeof v === 'function') continue;
      out[k] = toExactJson(v);
    }
    return out;
  }
  return null;
}

export function stringifyExact(value: unknown, indent?: number): string {
  return JSON.stringify(toExactJson(value), null, indent);
}

/**
 * Exact JSON with the long number series taken out as float64 columns: the form a run
 * record stores (src-main/runs/runs.ts: the text in `result`, the columns in
 * `result_columns`). Every array of at least COLUMN_MIN numbers (a plain array or a
 * Float64Array) becomes `{"$col": n}` (a plain array) or `{"$f64col": n}` (a
 * Float64Array), n its index in `columns`; `parseExactColumns` puts them back, the same
 * values bit for bit (-0 and NaN included) and of the same kind. A fit's discounted paths
 * (up to 500,000 numbers) then take 8 bytes a number instead of about 20, and neither
 * writing nor reading them goes through decimal text.
 */
export const COLUMN_MIN = 256;

export function stringifyExactColumns(value: unknown): { text: string; columns: Float64Array[] } {
  const columns: Float64Array[] = [];
  const numbers = (a: unknown[]): boolean => {
    for (let i = 0; i < a.length; i++) if (typeof a[i] !== 'number') return false;
    return true;
  };
  const tree = (v: unknown): Json => {
    if (v instanceof Float64Array && v.length >= COLUMN_MIN) {
      columns.push(Float64Array.from(v));
      return { $f64col: columns.length - 1 };
    }
    if (Array.isArray(v) && v.length >= COLUMN_MIN && numbers(v)) {
      columns.push(Float64Array.from(v as number[]));
      return { $col: columns.length - 1 };
    }
    if (Array.isArray(v)) return v.map((x) => (x === undefined || typeof x === 'function' ? null : tree(x)));
    if (v !== null && typeof v === 'object' && !ArrayBuffer.isView(v)) {
      const out: { [k: string]: Json } = {};
      for (const [k, x] of Object.entries(v as Record<string, unknown>)) {
        if (x === undefined || typeof x === 'function') continue;
        out[k] = tree(x);
      }
      return out;
    }
    return toExactJson(v);
  };
  return { text: JSON.stringify(tree(value)), columns };
}

/** The value written by stringifyExactColumns, from its text and columns. */
export function parseExactColumns<T = unknown>(text: string, columns: readonly Float64Array[]): T {
  return JSON.parse(text, (key, v) => {
    if (v !== null && typeof v === 'object' && !Array.isArray(v)) {
      const o = v as Record<string, unknown>;
      const keys = Object.keys(o);
      if (keys.length === 1 && (keys[0] === '$col' || keys[0] === '$f64col') && typeof o[keys[0]] === 'number') {
        const c = columns[o[keys[0]] as number];
        if (!c) throw new RangeError(`exact JSON: column ${String(o[keys[0]])} is missing`);
        return keys[0] === '$col' ? Array.from(c) : Float64Array.from(c);
      }
    }
    return untag(key, v);
  }) as T;
}

const LITTLE_ENDIAN = new Uint8Array(Float64Array.of(1).buffer)[7] === 0x3f;
const COLUMNS_MAGIC = 0x43524644; // "DFRC" little-endian

/**
 * Columns as bytes (little-endian): "DFRC", u32 layout (1), u32 count, count x u32 lengths,
 * zero bytes to a multiple of 8, then the columns' float64 values one after another.
 */
export function encodeColumns(columns: readonly Float64Array[]): Uint8Array {
  const head = 12 + 4 * columns.length;
  const at0 = Math.ceil(head / 8) * 8;
  let n = 0;
  for (const c of columns) n += c.length;
  const out = new Uint8Array(at0 + n * 8);
  const view = new DataView(out.buffer);
  view.setUint32(0, COLUMNS_MAGIC, true);
  view.setUint32(4, 1, true);
  view.setUint32(8, columns.length, true);
  columns.forEach((c, i) => view.setUint32(12 + 4 * i, c.length, true));
  let at = at0;
  for (const c of columns) {
    if (LITTLE_ENDIAN) out.set(new Uint8Array(c.buffer, c.byteOffset, c.length * 8), at);
    else for (let t = 0; t < c.length; t++) view.setFloat64(at + t * 8, c[t], true);
    at += c.length * 8;
  }
  return out;
}

export function decodeColumns(bytes: Uint8Array): Float64Array[] {
  const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  if (bytes.byteLength < 12 || view.getUint32(0, true) !== COLUMNS_MAGIC || view.getUint32(4, true) !== 1) throw new RangeError('exact JSON: the columns are not in layout 1');
  const count = view.getUint32(8, true);
  let at = Math.ceil((12 + 4 * count) / 8) * 8;
  const out: Float64Array[] = [];
  for (let i = 0; i < count; i++) {
    const len = view.getUint32(12 + 4 * i, true);
    if (at + len * 8 > bytes.byteLength) throw new RangeError(`exact JSON: column ${i} runs past the end`);
    if (LITTLE_ENDIAN) out.push(new Float64Array(Uint8Array.prototype.slice.call(bytes, at, at + len * 8).buffer));
    else out.push(Float64Array.from({ length: len }, (_, t) => view.getFloat64(at + t * 8, true)));
    at += len * 8;
  }
  return out;
}

function untag(_key: string, v: unknown): unknown {
  if (v !== null && typeof v === 'object' && !Array.isArray(v)) {
    const o = v as Record<string, unknown>;
    const keys = Object.keys(o);
    if (keys.length === 1 && keys[0] === '$num' && typeof o.$num === 'string') return Number(o.$num);
    if (keys.length === 1 && keys[0] === '$f64' && Array.isArray(o.$f64)) return Float64Array.from(o.$f64 as number[]);
  }
  return v;
}

export function parseExact<T = unknown>(text: string): T {
  return JSON.parse(text, untag) as T;
}

/** One number (or value) that differs between a stored result and a recomputed one. */
export interface ValueDifference {
  /** Where, e.g. `params[1:b.MKT].se` or `models[0:linear(MKT)].test.stat` (index, then the row's name). */
  path: string;
  stored: unknown;
  recomputed: unknown;
}

/** Are two doubles the same bits (NaN equals NaN, -0 differs from 0)? */
export function sameDouble(a: number, b: number): boolean {
  return Object.is(a, b);
}

/** `:name` of a row that has a name (name, asset, label, end), to make a path readable. */
function tagOf(x: unknown): string {
  if (x === null || typeof x !== 'object') return '';
  const o = x as Record<string, unknown>;
  for (const k of ['name', 'asset', 'label', 'end']) if (typeof o[k] === 'string') return `:${o[k] as string}`;
  return '';
}

/**
 * Every leaf where two results differ: numbers by their bits (sameDouble), strings and
 * booleans by value, missing keys and array lengths as differences of their own.
 * `limit` caps the list (the count is still exact in `count`).
 */
export function diffExact(stored: unknown, recomputed: unknown, limit = 1000): { count: number; differences: ValueDifference[] } {
  const differences: ValueDifference[] = [];
  let count = 0;
  const note = (path: string, s: unknown, r: unknown): void => {
    count++;
    if (differences.length < limit) differences.push({ path, stored: s, recomputed: r });
  };
  const walk = (a: unknown, b: unknown, path: string): void => {
    if (typeof a === 'number' && typeof b === 'number') {
      if (!sameDouble(a, b)) note(path, a, b);
      return;
    }
    const aList = Array.isArray(a) || a instanceof Float64Array ? Array.from(a as ArrayLike<unknown>) : null;
    const bList = Array.isArray(b) || b instanceof Float64Array ? Array.from(b as ArrayLike<unknown>) : null;
    if (aList && bList) {
      if (aList.length !== bList.length) note(`${path}.length`, aList.length, bList.length);
      const n = Math.min(aList.length, bList.length);
      for (let i = 0; i < n; i++) walk(aList[i], bList[i], `${path}[${i}${tagOf(aList[i])}]`);
      return;
    }
    if (a !== null && b !== null && typeof a === 'object' && typeof b === 'object' && !aList && !bList) {
      const ao = a as Record<string, unknown>;
      const bo = b as Record<string, unknown>;
      const keys = new Set([...Object.keys(ao), ...Object.keys(bo)]);
      for (const k of keys) {
        const p = path ? `${path}.${k}` : k;
        const av = ao[k];
        const bv = bo[k];
        if (av === undefined && bv === undefined) continue;
        if (av === undefined || bv === undefined) note(p, av ?? '(absent)', bv ?? '(absent)');
        else walk(av, bv, p);
      }
      return;
    }
    if (a !== b) note(path || '(root)', a, b);
  };
  walk(stored, recomputed, '');
  return { count, differences };
}
