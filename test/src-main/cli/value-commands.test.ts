/**
 * `deflator present-value` and `deflator drift` end to end on the demo database
 * (`node dist/cli.js`, built by vitest's global setup): the --json keys are the documented
 * contract (exactly those, plus "warnings"), the numbers are those of the same computation
 * in this process (checked against statsmodels/numpy/pandas in test/shared/values), and
 * refusals exit 1 naming the cause.
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { CAUTION } from '../../../shared/results.js';
import { parseDriftSpec, parsePresentValueSpec } from '../../../shared/spec.js';
import { driftAnalysis } from '../../../shared/values/drift.js';
import { presentValue } from '../../../shared/values/presentValue.js';
import { loadDriftPanel } from '../../../src-main/data/panel.js';
import { Store } from '../../../src-main/store/store.js';

const root = path.resolve(import.meta.dirname, '../../..');
const cli = path.join(root, 'dist', 'cli.js');

function run(args: string[]) {
  const r = spawnSync(process.execPath, [cli, ...args], { cwd: root, encoding: 'utf8' });
  return { code: r.status, stdout: r.stdout, stderr: r.stderr };
}

let db = '';
beforeAll(() => {
  db = path.join(mkdtempSync(path.join(tmpdir(), 'deflator-values-')), 'demo.db');
  const r = run(['demo', '--db', db]);
  expect(r.code, r.stderr).toBe(0);
}, 120_000);

const keys = (o: object) => Object.keys(o).sort();

describe('deflator present-value', () => {
  it('--aggregate --json: exactly the documented keys, the numbers of the computation', () => {
    const r = run(['present-value', '--db', db, '--aggregate', '--json']);
    expect(r.code, r.stderr).toBe(0);
    const out = JSON.parse(r.stdout);
    expect(keys(out)).toEqual(['assets', 'frequency', 'identity', 'longRun', 'regressions', 'rho', 'sample', 'varianceShares', 'warnings']);
    expect(keys(out.sample)).toEqual(['T', 'first', 'last']);
    expect(keys(out.regressions)).toEqual(['dd', 'dp', 'r']);
    for (const k of ['r', 'dd', 'dp']) expect(keys(out.regressions[k])).toEqual(['a', 'b', 'r2', 'seB']);
    expect(keys(out.identity)).toEqual(['gap', 'value']);
    expect(keys(out.longRun)).toEqual(['dd', 'r']);
    expect(keys(out.longRun.r)).toEqual(['b', 'se']);
    expect(keys(out.varianceShares)).toEqual(['dd', 'r']);
    expect(out.frequency).toBe('annual');
    expect(out.sample).toEqual({ first: '2001', last: '2024', T: 24 });
    expect(out.assets).toHaveLength(30);
    const store = new Store(db, { mustExist: true });
    const local = presentValue(parsePresentValueSpec({ analysis: 'present-value', aggregate: true }), store.loadHistories());
    store.close();
    expect(out.rho).toBe(local.rho);
    expect(out.regressions.r.b).toBe(local.regressions.r.b);
    expect(out.regressions.dp.seB).toBe(local.regressions.dp.seB);
    expect(out.longRun.dd.se).toBe(local.longRun.dd.se);
    expect(out.identity.gap).toBe(local.identity.gap);
  });

  it('--asset: "asset" instead of "assets"; the readable report carries the caution', () => {
    const r = run(['present-value', '--db', db, '--asset', 'lanternfold-power', '--start', '2003', '--end', '2022', '--lags', '1', '--json']);
    expect(r.code, r.stderr).toBe(0);
    const out = JSON.parse(r.stdout);
    expect(out.asset).toBe('lanternfold-power');
    expect(out.assets).toBeUndefined();
    expect(out.sample).toEqual({ first: '2003', last: '2022', T: 20 });
    const text = run(['present-value', '--db', db, '--asset', 'lanternfold-power']);
    expect(text.code, text.stderr).toBe(0);
    expect(text.stdout).toContain(CAUTION);
    expect(text.stdout).toContain('Long-run coefficients and variance shares of dp');
  });

  it('named refusals: no dividends at all, a wrong flag combination, too few years', () => {
    const none = run(['present-value', '--db', db, '--asset', 'fallowmere-grain']);
    expect(none.code).toBe(1);
    expect(none.stderr).toContain('pays no dividends');
    expect(none.stderr).toContain('->');
    const both = run(['present-value', '--db', db, '--asset', 'x', '--aggregate']);
    expect(both.code).toBe(1);
    expect(both.stderr).toContain('--asset and --aggregate both given');
    const short = run(['present-value', '--db', db, '--aggregate', '--start', '2022']);
    expect(short.code).toBe(1);
    expect(short.stderr).toContain('3 years');
    const monthly = run(['present-value', '--db', db, '--aggregate', '--frequency', 'monthly']);
    expect(monthly.code).toBe(1);
    expect(monthly.stderr).toContain('calendar years only');
  });
});

describe('recorded runs: show, replay, runs --kind', () => {
  it('a present-value run and a drift run are recorded, shown with their record, and replay bit for bit', () => {
    const pv = run(['present-value', '--db', db, '--asset', 'harrowind-timber']);
    expect(pv.code, pv.stderr).toBe(0);
    const id = Number(/Recorded as run (\d+)/.exec(pv.stdout)?.[1]);
    expect(id).toBeGreaterThan(0);
    const dr = run(['drift', '--db', db, '--assets', 'harrowind-timber', '--json']);
    expect(dr.code, dr.stderr).toBe(0);
    const driftId = Number(/Recorded as run (\d+)/.exec(dr.stderr)?.[1]);
    expect(driftId).toBe(id + 1);
    const none = run(['drift', '--db', db, '--assets', 'harrowind-timber', '--no-record']);
    expect(none.stdout).not.toContain('Recorded as run');

    const show = run(['show', String(id), '--db', db]);
    expect(show.code, show.stderr).toBe(0);
    expect(show.stdout).toContain(CAUTION);
    expect(show.stdout).toContain('Predictive regressions on dp(t)');
    expect(show.stdout).toContain('panel sha256');
    expect(show.stdout).toContain('Data: unchanged since the run');
    for (const r of [id, driftId]) {
      const replay = run(['replay', String(r), '--db', db]);
      expect(replay.code, replay.stdout + replay.stderr).toBe(0);
      expect(replay.stdout).toMatch(/REPLAY OK/);
    }
    const list = run(['runs', '--db', db, '--kind', 'drift', '--json']);
    expect(list.code, list.stderr).toBe(0);
    expect((JSON.parse(list.stdout) as { id: number }[]).map((r) => r.id)).toContain(driftId);
  });
});

describe('deflator drift', () => {
  it('--json: exactly the documented keys, the split of every demo asset', () => {
    const r = run(['drift', '--db', db, '--json']);
    expect(r.code, r.stderr).toBe(0);
    const out = JSON.parse(r.stdout);
    expect(keys(out)).toEqual(['assets', 'frequency', 'sample', 'warnings']);
    expect(out.frequency).toBe('monthly');
    expect(out.sample).toEqual({ first: '2001-01-31', last: '2024-12-31', T: 288 });
    expect(out.assets).toHaveLength(30);
    for (const a of out.assets) {
      expect(keys(a)).toEqual(['asset', 'dividendYield', 'drift', 'logDrift', 'priceGrowth', 'se', 'sigma']);
      expect(keys(a.se)).toEqual(['dividendYield', 'drift', 'priceGrowth']);
    }
    const store = new Store(db, { mustExist: true });
    const spec = parseDriftSpec({ analysis: 'drift' });
    const local = driftAnalysis(spec, loadDriftPanel(store, spec));
    store.close();
    expect(out.assets.map((a: { drift: number }) => a.drift)).toEqual(local.assets.map((a) => a.drift));
    expect(out.assets.map((a: { se: { dividendYield: number } }) => a.se.dividendYield)).toEqual(local.assets.map((a) => a.se.dividendYield));
  });

  it('quarterly over a window, and a refusal for an unknown frequency', () => {
    const r = run(['drift', '--db', db, '--assets', 'lanternfold-power,harrowind-timber', '--frequency', 'quarterly', '--start', '2010-01-01', '--end', '2019-12-31', '--json']);
    expect(r.code, r.stderr).toBe(0);
    const out = JSON.parse(r.stdout);
    expect(out.sample).toEqual({ first: '2010-03-31', last: '2019-12-31', T: 40 });
    const bad = run(['drift', '--db', db, '--frequency', 'fortnightly']);
    expect(bad.code).toBe(1);
    expect(bad.stderr).toContain('--frequency');
  });
});

describe('assets stored as returns', () => {
  it('drift shows drift and sigma with null split and one warning saying why; present-value refuses them by name', () => {
    const rdb = path.join(mkdtempSync(path.join(tmpdir(), 'deflator-values-ret-')), 'returns.db');
    const imp = run(['import', 'returns', path.join(root, 'sample-data', 'returns', 'portfolios.csv'), '--db', rdb, '--date-format', 'YYYYMM', '--units', 'percent', '--missing', '-99.99']);
    expect(imp.code, imp.stderr).toBe(0);
    const dr = run(['drift', '--db', rdb, '--assets', 'large-t1,mid-t2', '--json', '--no-record']);
    expect(dr.code, dr.stderr).toBe(0);
    const out = JSON.parse(dr.stdout);
    expect(out.assets.map((a: { priceGrowth: null }) => a.priceGrowth)).toEqual([null, null]);
    expect(out.assets[0].se.dividendYield).toBeNull();
    expect(out.assets[0].sigma).toBeGreaterThan(0);
    expect(out.warnings).toEqual([expect.objectContaining({ code: 'NO_PRICE_SPLIT' })]);
    expect(out.warnings[0].message).toContain('large-t1, mid-t2 are stored as returns');
    const pv = run(['present-value', '--db', rdb, '--asset', 'large-t1']);
    expect(pv.code).toBe(1);
    expect(pv.stderr).toContain('"large-t1" is stored as returns');
  });
});
