/**
 * The panel cache (src-main/data/panel-cache.ts) on the invented demo market: a panel read
 * from it equals the panel built from the rows bit for bit (the returns engine's own output
 * is the reference: the engine is checked against pandas in test/shared/returns), with the
 * same fingerprint and subject digests for the run record; any change to the data the panel
 * came from (an import adding dates, one with --replace, a change by another program with
 * plain SQL, a series' stored risk-free form) makes it build again from the rows; other panel
 * settings get panels of their own; a read-only database reads it and stores nothing; replay
 * never reads it; and it keeps at most MAX_ENTRIES panels.
 */
import Database from 'better-sqlite3';
import { copyFileSync, writeFileSync } from 'node:fs';
import { afterAll, afterEach, beforeAll, beforeEach, describe, expect, it } from 'vitest';
import type { ReturnsPanel } from '../../../shared/panel.js';
import { fingerprintPanel } from '../../../shared/records/panel-encoding.js';
import { parseFitSpec, type FitSpec } from '../../../shared/spec.js';
import { cachedPanel, knownFingerprint, MAX_ENTRIES, setPanelCacheIdentity } from '../../../src-main/data/panel-cache.js';
import { importPrices } from '../../../src-main/import/index.js';
import { recordRun } from '../../../src-main/runs/runs.js';
import { loadAnalysisData } from '../../../src-main/services/analysis.js';
import { Store } from '../../../src-main/store/store.js';
import { editPrice, makeProject, type Project } from '../runs/helpers.js';

let p: Project;
beforeAll(() => setPanelCacheIdentity('test build'));
afterAll(() => setPanelCacheIdentity(null));
beforeEach(async () => {
  p = await makeProject();
});
afterEach(() => p.store.close());

const spec = (extra: Record<string, unknown> = {}): FitSpec =>
  parseFitSpec({ frequency: 'monthly', returns: 'excess', riskfree: 'bill_yield', model: { kind: 'linear', factors: ['harbor', 'ember', 'ledger'] }, estimator: { stage: 'second' }, ...extra });
const entries = (store: Store) => store.db.prepare('SELECT count(*) FROM panel_cache').pluck().get() as number;
const fit = (s: FitSpec) => ({ kind: 'fit' as const, spec: s });
const built = (store: Store, s: FitSpec) => loadAnalysisData(store, fit(s), { digests: true, cache: false });

/** Same shape and the same bits in every series (the float64 values, by Object.is), same text. */
function samePanel(a: ReturnsPanel, b: ReturnsPanel): boolean {
  const norm = (x: unknown): unknown =>
    x instanceof Float64Array ? Array.from(x, (v) => (Object.is(v, -0) ? '-0' : v)) : Array.isArray(x) ? x.map(norm) : x && typeof x === 'object' ? Object.fromEntries(Object.entries(x).map(([k, v]) => [k, norm(v)])) : x;
  return JSON.stringify(norm(a)) === JSON.stringify(norm(b));
}

describe('panel cache', () => {
  it('a panel read from the cache is the panel built from the rows, bit for bit, with its fingerprint and subject digests', () => {
    const s = spec();
    const first = loadAnalysisData(p.store, fit(s), { digests: true });
    expect(entries(p.store)).toBe(1);
    const hit = cachedPanel(p.store, s);
    expect(hit).not.toBeNull();
    const fresh = built(p.store, s);
    expect(samePanel(hit!.panel, fresh.panels[0])).toBe(true);
    expect(samePanel(first.panels[0], fresh.panels[0])).toBe(true);
    expect(hit!.fingerprint).toEqual(fingerprintPanel(fresh.panels[0]));
    expect(knownFingerprint(hit!.panel)).toEqual(hit!.fingerprint);
    expect(hit!.subjects).toEqual(fresh.subjects);
    // a second load reads it (and records the same run as a built panel would)
    const second = loadAnalysisData(p.store, fit(s), { digests: true });
    expect(knownFingerprint(second.panels[0])).toEqual(hit!.fingerprint);
    expect(second.subjects).toEqual(fresh.subjects);
    const result = { kind: 'fit', label: 'x' } as never;
    const a = recordRun(p.store, { spec: s, result, panel: second.panels[0], subjects: second.subjects });
    const b = recordRun(p.store, { spec: s, result, panel: fresh.panels[0], subjects: fresh.subjects });
    expect(a.panel).toEqual(b.panel);
    expect(a.subjects).toEqual(b.subjects);
    expect(a.files).toEqual(b.files);
  });

  it('other panel settings get panels of their own; the fit settings that do not change a panel share one', () => {
    loadAnalysisData(p.store, fit(spec()));
    loadAnalysisData(p.store, fit(spec({ estimator: { stage: 'first' } })));
    expect(entries(p.store)).toBe(1);
    for (const extra of [{ start: '2005-01-01' }, { model: { kind: 'linear', factors: ['harbor'] } }, { returns: 'gross', model: { kind: 'linear-gross', factors: ['harbor', 'ember', 'ledger'] } }, { assets: ['corvane-saltworks', 'brinemoor-ferries'] }]) {
      const s = spec(extra);
      const got = loadAnalysisData(p.store, fit(s)).panels[0];
      expect(samePanel(got, built(p.store, s).panels[0]), JSON.stringify(extra)).toBe(true);
      expect(samePanel(cachedPanel(p.store, s)!.panel, got)).toBe(true);
    }
    expect(entries(p.store)).toBe(5);
    // a drift split's panel (price ratios) is not a fit's
    const drift = { ...spec(), model: { kind: 'linear', factors: ['harbor'] } } as FitSpec;
    expect(cachedPanel(p.store, drift, true)).toBeNull();
  });

  it('any change to the data the panel came from makes the next load build it from the rows', async () => {
    const s = spec();
    const before = loadAnalysisData(p.store, fit(s)).panels[0];
    // an import adding a date to one asset
    const more = p.file('more.csv');
    writeFileSync(more, 'date,asset,price\n2030-01-31,corvane-saltworks,10\n');
    await importPrices(p.store, more, { layout: 'long' });
    expect(entries(p.store)).toBe(0);
    expect(cachedPanel(p.store, s)).toBeNull();
    loadAnalysisData(p.store, fit(s));
    expect(entries(p.store)).toBe(1);
    // a corrected price, imported with --replace
    const corrected = p.file('prices-corrected.csv');
    copyFileSync(p.file('prices.csv'), corrected);
    editPrice(corrected, 'corvane-saltworks', '2010-06-30', 1.01);
    await importPrices(p.store, corrected, { layout: 'long', replace: true });
    expect(entries(p.store)).toBe(0);
    const after = loadAnalysisData(p.store, fit(s)).panels[0];
    expect(fingerprintPanel(after).sha256).not.toBe(fingerprintPanel(before).sha256);
    expect(samePanel(after, built(p.store, s).panels[0])).toBe(true);
    // another program's plain SQL
    const other = new Database(p.dbPath);
    try {
      other.prepare("UPDATE observation SET price = price * 1.01 WHERE asset_id = (SELECT id FROM asset WHERE name = 'brinemoor-ferries') AND date = '2012-03-30'").run();
    } finally {
      other.close();
    }
    expect(entries(p.store)).toBe(0);
    const third = loadAnalysisData(p.store, fit(s)).panels[0];
    expect(samePanel(third, built(p.store, s).panels[0])).toBe(true);
    expect(fingerprintPanel(third).sha256).not.toBe(fingerprintPanel(after).sha256);
    // the risk-free series' stored form changes what its values mean: another key
    p.store.db.prepare("UPDATE series SET rf_form = 'yield-simple' WHERE name = 'bill_yield'").run();
    expect(cachedPanel(p.store, s)).toBeNull();
    const fourth = loadAnalysisData(p.store, fit(s)).panels[0];
    expect(samePanel(fourth, built(p.store, s).panels[0])).toBe(true);
    expect(fingerprintPanel(fourth).sha256).not.toBe(fingerprintPanel(third).sha256);
  });

  it('a read-only database reads cached panels and stores none; replay-style loads never read it', () => {
    const s = spec();
    loadAnalysisData(p.store, fit(s));
    p.store.close();
    const ro = new Store(p.dbPath, { readonly: true });
    try {
      expect(cachedPanel(ro, s)).not.toBeNull();
      loadAnalysisData(ro, fit(spec({ start: '2006-01-01' })));
      expect(entries(ro)).toBe(1);
    } finally {
      ro.close();
    }
    p.store = new Store(p.dbPath);
    const got = loadAnalysisData(p.store, fit(s), { cache: false }).panels[0];
    expect(knownFingerprint(got)).toBeUndefined();
  });

  it(`keeps at most ${MAX_ENTRIES} panels, the latest`, () => {
    for (let k = 0; k < MAX_ENTRIES + 3; k++) loadAnalysisData(p.store, fit(spec({ start: `${2002 + k}-01-01` })));
    expect(entries(p.store)).toBe(MAX_ENTRIES);
    expect(cachedPanel(p.store, spec({ start: '2002-01-01' }))).toBeNull();
    expect(cachedPanel(p.store, spec({ start: `${2002 + MAX_ENTRIES + 2}-01-01` }))).not.toBeNull();
  });

  it('is off where the program has no build identity (code run from its sources)', () => {
    setPanelCacheIdentity(null);
    try {
      loadAnalysisData(p.store, fit(spec()));
      expect(entries(p.store)).toBe(0);
    } finally {
      setPanelCacheIdentity('test build');
    }
  });
});
