/**
 * The run record's subject digests computed from the rows the panel load read
 * (loadedDigests, one buffer per subject) equal the digests read back from the store
 * (DataFingerprinter.subject) for every asset (dividends, split factors, share counts),
 * series and portfolio of the demo project; and SHA-256 of a known buffer is the value
 * of the FIPS 180-2 example ("abc").
 */
import { createHash } from 'node:crypto';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { loadedDigests, DataFingerprinter, subjectDigest } from '../../../src-main/runs/dependencies.js';
import { nodeSha256 } from '../../../src-main/store/digest.js';
import { makeProject, type Project } from './helpers.js';

let p: Project;
beforeAll(async () => {
  p = await makeProject();
  p.store.savePortfolio({ name: 'two-month', frequency: 'monthly', periods: ['2001-01', '2001-02', '2001-03'], net: Float64Array.from([0.01, Number.NaN, -0.02]) });
});
afterAll(() => p.store.close());

describe('subject digests', () => {
  it('from the loaded rows equal those read back from the store, subject by subject', () => {
    const input = { histories: p.store.loadHistories(), series: p.store.loadSeries(), portfolios: p.store.loadPortfolios() };
    const loaded = loadedDigests(input);
    expect(loaded.length).toBe(input.histories.length + input.series.length + 1);
    expect(input.histories.some((h) => h.adjust) && input.histories.some((h) => h.shares)).toBe(true);
    const fp = new DataFingerprinter(p.store);
    for (const d of loaded) expect(fp.subject({ kind: d.kind, name: d.name })).toEqual(d);
  });

  it('keep the documented row layout (docs/methods.md, run records), so runs recorded earlier are not read as stale', () => {
    // the layout written field by field, independently of subjectDigest
    const h = p.store.loadHistories().find((x) => x.adjust && x.shares)!;
    const hash = createHash('sha256');
    const str = (s: string) => {
      const b = Buffer.from(s, 'utf8');
      const n = Buffer.alloc(4);
      n.writeUInt32LE(b.length);
      hash.update(n).update(b);
    };
    const num = (x: number) => {
      const f = Buffer.alloc(8);
      f.writeDoubleLE(x);
      hash.update(f);
    };
    str('asset');
    str(h.asset);
    h.dates.forEach((d, i) => {
      str(d);
      num(h.price[i]);
      num(h.dividend[i]);
      num(h.adjust![i]);
      const sh = h.shares![i];
      hash.update(Buffer.from([Number.isNaN(sh) ? 0 : 1]));
      if (!Number.isNaN(sh)) num(sh);
    });
    expect(new DataFingerprinter(p.store).subject({ kind: 'asset', name: h.asset })!.sha256).toBe(hash.digest('hex'));
  });

  it('SHA-256 (node:crypto) of "abc" is the FIPS 180-2 example value', () => {
    expect(nodeSha256(new TextEncoder().encode('abc'))).toBe('ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad');
    expect(subjectDigest({ kind: 'series', name: 'x', dates: [], values: [[]] }).rows).toBe(0);
  });
});
