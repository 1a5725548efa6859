import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { COLUMN_MIN, decodeColumns, diffExact, encodeColumns, parseExact, parseExactColumns, stringifyExact, stringifyExactColumns } from '../../../shared/records/exact-json.js';

describe('exact JSON', () => {
  // Reference: ECMA-262 Number::toString round-trip property, checked over arbitrary doubles
  // (fast-check's fc.double generator covers subnormals, -0, NaN and infinities).
  it('round-trips every double bit for bit, -0 and non-finite included', () => {
    fc.assert(
      fc.property(fc.double(), (x) => {
        const back = parseExact<{ x: number; a: Float64Array }>(stringifyExact({ x, a: Float64Array.of(x, -x) }));
        expect(Object.is(back.x, x)).toBe(true);
        expect(back.a).toBeInstanceOf(Float64Array);
        expect(Object.is(back.a[0], x) && Object.is(back.a[1], -x)).toBe(true);
      }),
      { numRuns: 2000 },
    );
  });

  it('writes plain JSON numbers for finite values other than -0', () => {
    expect(stringifyExact({ a: 0.1, b: -0, c: [1e-320, 5e-324], d: undefined })).toBe('{"a":0.1,"b":{"$num":"-0"},"c":[1e-320,5e-324]}');
  });

  it('lists each differing leaf with its path and both values', () => {
    const stored = { params: [{ name: 'b.MKT', estimate: 1.5, se: 0.25 }], test: { stat: 3, df: 2 }, notes: ['x'] };
    const recomputed = { params: [{ name: 'b.MKT', estimate: 1.5000000000000002, se: 0.25 }], test: { stat: 3, df: 2, p: 0.2 }, notes: ['x', 'y'] };
    const d = diffExact(stored, recomputed);
    expect(d.count).toBe(3);
    expect(d.differences).toEqual([
      { path: 'params[0:b.MKT].estimate', stored: 1.5, recomputed: 1.5000000000000002 },
      { path: 'test.p', stored: '(absent)', recomputed: 0.2 },
      { path: 'notes.length', stored: 1, recomputed: 2 },
    ]);
    expect(diffExact({ z: 0 }, { z: -0 }).count).toBe(1);
    expect(diffExact({ z: NaN }, { z: NaN }).count).toBe(0);
    expect(diffExact(parseExact(stringifyExact(recomputed)), recomputed).count).toBe(0);
  });

  // The run record's form: long number series as float64 columns (IEEE 754 binary64 bytes
  // keep every bit, as the decimal text does by ECMA-262's round trip).
  it('takes long number series out as columns and puts them back bit for bit, of the same kind', () => {
    fc.assert(
      fc.property(fc.array(fc.double(), { minLength: COLUMN_MIN, maxLength: COLUMN_MIN + 40 }), fc.array(fc.double(), { maxLength: COLUMN_MIN - 1 }), (long, short) => {
        const value = { label: 'x', paths: { a: long, b: long.map((v) => -v) }, draws: Float64Array.from(long), few: short, f64few: Float64Array.from(short), nested: [{ s: long }], mixed: [...long.slice(0, COLUMN_MIN), 'text'] };
        const { text, columns } = stringifyExactColumns(value);
        expect(columns.length).toBe(4);
        const back = parseExactColumns<typeof value>(text, decodeColumns(encodeColumns(columns)));
        // the same tree, leaf for leaf by bits (diffExact compares doubles with Object.is), and of the same kinds
        expect(diffExact(value, back).count).toBe(0);
        expect(Array.isArray(back.paths.a) && back.draws instanceof Float64Array && Array.isArray(back.few) && back.f64few instanceof Float64Array).toBe(true);
        // the text holds the short parts as exact JSON does, the long ones by reference
        expect(text).toContain('{"$col":0}');
        expect(text).toContain('"draws":{"$f64col":2}');
        expect(parseExact(stringifyExact(back))).toEqual(parseExact(stringifyExact(value)));
      }),
      { numRuns: 200 },
    );
  });

  it('refuses columns in another layout or cut short', () => {
    const bytes = encodeColumns([Float64Array.of(1, 2, 3)]);
    expect(() => decodeColumns(bytes.subarray(0, bytes.length - 8))).toThrow(/runs past the end/);
    const bad = bytes.slice();
    bad[0] ^= 1;
    expect(() => decodeColumns(bad)).toThrow(/not in layout 1/);
    expect(() => parseExactColumns('{"a":{"$col":1}}', [Float64Array.of(1)])).toThrow(/column 1 is missing/);
  });
});
