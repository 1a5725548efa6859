/**
 * The back-test, comparison and portfolio commands end to end on the demo database:
 * `node dist/cli.js` (the bundle vitest's global setup builds). The numbers are those of
 * the same computation in this process (the computations themselves are checked against
 * numpy, pandas and R in test/shared); here: JSON contracts, records written only after
 * success, refusals that change nothing, and no progress output when stderr is not a
 * terminal.
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { backtest } from '../../../shared/backtest/index.js';
import { fit } from '../../../shared/estimation/fit.js';
import { parseSortSpec, sortPortfolios } from '../../../shared/portfolios/index.js';
import { parseFitSpec } from '../../../shared/spec.js';
import { loadPanel } from '../../../src-main/data/panel.js';
import { Store } from '../../../src-main/store/store.js';
import { formatBar, progressBar } from '../../../src-main/cli/progress.js';

const root = path.resolve(import.meta.dirname, '../../..');
const cli = path.join(root, 'dist', 'cli.js');
const specs = path.join(root, 'sample-data', 'specs');

function run(args: string[]) {
  const r = spawnSync(process.execPath, [cli, ...args], { cwd: root, encoding: 'utf8' });
  return { code: r.status, stdout: r.stdout, stderr: r.stderr };
}

let db = '';
beforeAll(() => {
  db = path.join(mkdtempSync(path.join(tmpdir(), 'deflator-analysis-')), 'demo.db');
  const r = run(['demo', '--db', db]);
  expect(r.code, r.stderr).toBe(0);
}, 120_000);

describe('deflator portfolio', () => {
  it('builds the momentum quintiles, stores them with their rules, refuses a second build under the same name', () => {
    const r = run(['portfolio', 'build', '--db', db, '--sort', 'momentum', '--groups', '5', '--name', 'mom', '--json']);
    expect(r.code, r.stderr).toBe(0);
    expect(r.stderr).toBe('');
    const out = JSON.parse(r.stdout) as { series: { name: string; periods: string[]; net: (number | null)[] }[]; rules: string; caution: string };
    expect(out.series.map((s) => s.name)).toEqual(['mom.q1', 'mom.q2', 'mom.q3', 'mom.q4', 'mom.q5']);
    const store = new Store(db, { mustExist: true });
    const local = sortPortfolios(store.loadHistories(), parseSortSpec({ characteristic: 'momentum', groups: 5, name: 'mom' }));
    const stored = store.loadPortfolios(['mom.q1', 'mom.q5']);
    const digest = store.contentDigest();
    store.close();
    expect(out.series[0].net).toEqual(Array.from(local.series[0].net, (v) => (Number.isNaN(v) ? null : v)));
    expect(Array.from(stored[1].net)).toEqual(Array.from(local.series[4].net));
    expect(stored[0].rules).toContain('past return over 12 periods skipping the latest 1');

    const again = run(['portfolio', 'build', '--db', db, '--sort', 'momentum', '--name', 'mom']);
    expect(again.code).toBe(1);
    expect(again.stderr).toMatch(/already exist/);
    const after = new Store(db, { mustExist: true });
    expect(after.contentDigest()).toBe(digest);
    after.close();

    const list = run(['portfolio', 'list', '--db', db, '--json']);
    expect((JSON.parse(list.stdout) as { name: string }[]).map((p) => p.name)).toEqual(['mom.q1', 'mom.q2', 'mom.q3', 'mom.q4', 'mom.q5']);
  });

  it('refuses unknown characteristics naming the option', () => {
    const r = run(['portfolio', 'build', '--db', db, '--sort', 'beauty', '--name', 'b']);
    expect(r.code).toBe(1);
    expect(r.stderr).toMatch(/portfolio\.characteristic/);
  });
});

describe('deflator backtest', () => {
  it('prints the JSON contract and equals the same back-test in this process', () => {
    const r = run(['backtest', path.join(specs, 'backtest-linear-rolling.json'), '--db', db, '--json', '--no-record']);
    expect(r.code, r.stderr).toBe(0);
    expect(r.stderr).toBe(''); // no progress bar: stderr is not a terminal
    const res = JSON.parse(r.stdout) as {
      windows: number;
      oos: { rmse: number; rmsePooled: number; r2: number };
      perAsset: { asset: string; alphaOos: number }[];
      paths: { end: string; params: { name: string; estimate: number; se: number }[] }[];
      caution: string;
    };
    expect(res.windows).toBe(168); // 288 monthly returns, 120-month windows, step 1, 1 held out
    expect(Object.keys(res.oos).sort()).toEqual(['r2', 'rmse', 'rmsePooled']);
    expect(res.caution).toMatch(/not investment advice/);
    const store = new Store(db, { mustExist: true });
    const spec = parseFitSpec(JSON.parse(JSON.stringify({ label: 'three-factor SDF, rolling 120-month windows', returns: 'excess', riskfree: 'bill_yield', model: { kind: 'linear', factors: ['harbor', 'ember', 'ledger'] }, estimator: { stage: 'second', lags: 'auto' }, backtest: { window: 120, step: 1, horizon: 1 } })));
    const local = backtest(spec, loadPanel(store, spec), { fit });
    store.close();
    expect(Math.abs(res.oos.rmse - local.oos.rmse)).toBeLessThan(1e-14);
    expect(Math.abs(res.oos.r2 - local.oos.r2)).toBeLessThan(1e-12);
    expect(res.perAsset.map((a) => a.asset)).toEqual(local.perAsset.map((a) => a.asset));
    expect(res.paths[167].params.map((p) => p.name)).toEqual(['b.harbor', 'b.ember', 'b.ledger', 'mu.harbor', 'mu.ember', 'mu.ledger', 'lambda.harbor', 'lambda.ember', 'lambda.ledger']);
  });

  it('records the run after success; a spec without windows is refused before any work', () => {
    const r = run(['backtest', path.join(specs, 'backtest-linear-rolling.json'), '--db', db, '--step', '24']);
    expect(r.code, r.stderr).toBe(0);
    expect(r.stdout).toMatch(/Back-test: three-factor SDF/);
    expect(r.stdout).toMatch(/Recorded as run \d+/);
    expect(r.stdout).toMatch(/not investment advice/);
    const bad = run(['backtest', path.join(specs, 'linear-second.json'), '--db', db]);
    expect(bad.code).toBe(1);
    expect(bad.stderr).toMatch(/no "backtest" block and no --window/);
  });
});

describe('deflator compare', () => {
  it('prints models, best per column and the HJ bootstrap tests', () => {
    const r = run(['compare', path.join(specs, 'compare-factor-models.json'), '--db', db, '--json', '--no-record', '--replications', '49']);
    expect(r.code, r.stderr).toBe(0);
    const res = JSON.parse(r.stdout) as {
      models: { label: string; test: { p: number }; hj: { distance: number }; fit: { rmse: number }; oos: { rmse: number; r2: number } }[];
      hjTests: { a: string; b: string; p: number; replications: number; block: number; seed: number }[];
      best: Record<string, string>;
    };
    expect(res.models.map((m) => m.label)).toEqual(['board only', 'three factors', 'spending']);
    for (const m of res.models) {
      expect(m.test.p).toBeGreaterThanOrEqual(0);
      expect(m.hj.distance).toBeGreaterThan(0);
      expect(Number.isFinite(m.oos.rmse)).toBe(true);
    }
    expect(res.hjTests.map((t) => [t.a, t.b])).toEqual([
      ['board only', 'three factors'],
      ['board only', 'spending'],
      ['three factors', 'spending'],
    ]);
    expect(res.hjTests[0]).toMatchObject({ replications: 49, block: 7, seed: 20261201 }); // ceil(288^(1/3)) = 7
    const rmses = res.models.map((m) => m.fit.rmse);
    expect(res.best['fit.rmse']).toBe(res.models[rmses.indexOf(Math.min(...rmses))].label);
  });
});

describe('progress bar', () => {
  it('draws on a terminal only, at most ten times a second, and clears its line', () => {
    expect(formatBar('windows', 120, 480, 65_000, 8)).toBe('windows [##......] 120/480  25%  1:05');
    const quiet: string[] = [];
    const off = progressBar('w', { isTTY: false, write: (s) => (quiet.push(s), true) });
    off.update(1, 2);
    off.finish();
    expect(quiet).toEqual([]);
    const out: string[] = [];
    let t = 0;
    const bar = progressBar('w', { isTTY: true, columns: 80, write: (s) => (out.push(s), true) }, () => t);
    bar.update(1, 10);
    t = 50;
    bar.update(2, 10); // within 100 ms: skipped
    t = 150;
    bar.update(3, 10);
    bar.update(10, 10); // the last one always drawn
    bar.finish();
    expect(out.length).toBe(4);
    expect(out[2]).toContain('10/10 100%');
    expect(out[3]).toBe('\r\x1b[K');
  });
});
