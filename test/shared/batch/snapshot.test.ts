/**
 * The panel snapshot shards read: every panel comes back bit for bit (checked through the
 * run records' canonical panel encoding and exact JSON), shared series are stored once,
 * and a changed byte is refused.
 */
import { describe, expect, it } from 'vitest';
import { SnapshotWriter, dataFingerprint, readSnapshot } from '../../../shared/batch/snapshot.js';
import { stringifyExact } from '../../../shared/records/exact-json.js';
import { encodePanel, fingerprintPanel } from '../../../shared/records/panel-encoding.js';
import type { ReturnsPanel } from '../../../shared/panel.js';
import { mulberry32 } from '../../../shared/random.js';

function panel(factors: string[], T = 40, seed = 1): ReturnsPanel {
  const rnd = mulberry32(seed);
  const col = () => Float64Array.from({ length: T }, () => rnd() - 0.5);
  const assets = ['a', 'b', 'c'];
  const returns = assets.map(col);
  returns[0][3] = -0; // the sign of zero survives
  // keys in the order buildPanel (shared/returns/panel.ts) writes them
  const p: ReturnsPanel = {
    frequency: 'monthly',
    periods: Array.from({ length: T }, (_, t) => `2001-${String((t % 12) + 1).padStart(2, '0')}-28`),
    assets,
    returnKind: 'excess',
    returns,
    factors: factors.map((name) => ({ name, values: col() })),
    sampleNotes: [{ subject: 'd', reason: 'dropped: a missing period' }],
  };
  p.riskfreeGross = Float64Array.from({ length: T }, () => 1.001);
  return p;
}

describe('panel snapshot', () => {
  it('reads back every panel exactly; a series shared by panels is stored once', () => {
    const p1 = panel(['x']);
    const p2: ReturnsPanel = { ...p1, factors: [...p1.factors, { name: 'y', values: Float64Array.from(p1.factors[0].values, (v) => v * 2) }] };
    const w = new SnapshotWriter();
    w.add(p1);
    w.add(p2);
    w.add(p1);
    const { index, columns } = w.finish();
    const parsed = JSON.parse(index) as { panels: unknown[]; columns: unknown[] };
    expect(parsed.panels).toHaveLength(2);
    // a, b, c, x, riskfree, then only y is new
    expect(parsed.columns).toHaveLength(6);
    expect(columns.length).toBe(6 * 40 * 8);
    const back = readSnapshot(index, columns);
    for (const p of [p1, p2]) {
      const q = back.get(fingerprintPanel(p).sha256)!;
      expect(encodePanel(q)).toEqual(encodePanel(p));
      expect(stringifyExact(q)).toBe(stringifyExact(p));
      expect(Object.is(q.returns[0][3], -0)).toBe(true);
    }
  });

  it('keeps every field a panel has: instruments, price ratios (with gaps), conditioning', () => {
    const p = panel(['x']);
    p.priceRatios = [Float64Array.from(p.returns[0], (r) => 1 + r), null, Float64Array.from(p.returns[2], (r) => 1 - r)];
    p.instruments = { lag: 1, series: [{ name: 'board_yield', values: Float64Array.from(p.returns[1], (r) => r / 3) }], lost: ['2000-12-28'] };
    p.conditioning = { scale: 'both', lag: 1, instruments: ['const', 'board_yield'], payoffs: [{ base: 'a', instrument: 'const', z: -1 }], factorParts: [], baseAssets: ['a'], baseFactors: ['x'], lost: [] };
    const w = new SnapshotWriter();
    const fp = w.add(p);
    const { index, columns } = w.finish();
    const q = readSnapshot(index, columns).get(fp.sha256)!;
    expect(stringifyExact(q)).toBe(stringifyExact(p));
    expect(q.priceRatios![1]).toBeNull();
  });

  it('refuses a changed value or a truncated file', () => {
    const w = new SnapshotWriter();
    w.add(panel(['x']));
    const { index, columns } = w.finish();
    const bad = columns.slice();
    bad[100] ^= 1;
    expect(() => readSnapshot(index, bad)).toThrow(/panel snapshot is damaged: panel [0-9a-f]{12} rebuilds with fingerprint/);
    expect(() => readSnapshot(index, columns.slice(0, columns.length - 8))).toThrow(/column \d+ is missing or of the wrong length/);
  });

  it('the data fingerprint depends on the set of panels, not their order', () => {
    expect(dataFingerprint(['b', 'a', 'b'])).toBe(dataFingerprint(['a', 'b']));
    expect(dataFingerprint(['a'])).not.toBe(dataFingerprint(['a', 'b']));
  });
});
