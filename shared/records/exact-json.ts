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
