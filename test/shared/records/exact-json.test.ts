import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { diffExact, parseExact, stringifyExact } from '../../../shared/records/exact-json.js';

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
});
