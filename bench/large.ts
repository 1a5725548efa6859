/**
 * Large data, end to end through the CLI, each step in its own child process whose peak
 * memory is measured (maxRSS from /usr/bin/time -v), against a stated ceiling:
 *
 *   1. import   5,000,000 rows (2,000 assets x 2,500 weekdays, long layout), then
 *               `deflator info` on the result and PRAGMA integrity_check;   ceiling 600 MB
 *   2. fit      a 2,000-asset monthly panel, 360 months, linear model K = 3: the
 *               time-series regressions (GRS needs T > N + K), the two-pass regressions
 *               (their pricing-error test needs T > N - K - 1) and GMM (S is 2003 x 2003)
 *               must refuse with their message, inside the ceiling too; then the same
 *               2,000 assets over 2,400 months
 *               (T > N + K), where all three run;                           ceiling 1,500 MB
 *   3. backtest the largest back-test case, N = 100, K = 5, T = 1,200 months, rolling
 *               240-month windows (960 windows), second-stage GMM;          ceiling 1,000 MB
 *
 * All data are invented here from a seeded three- or five-factor model. Prints a table
 * for the README (Robustness) and exits non-zero when a step fails or passes its ceiling.
 *   npm run bench -- large        options: --only import|fit|fit-short|fit-long|backtest, --keep
 */
import { spawnSync } from 'node:child_process';
import { createWriteStream, existsSync, mkdtempSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import Database from 'better-sqlite3';
import { mulberry32 } from '../shared/random.js';

const root = path.resolve(import.meta.dirname, '..');
const cli = path.join(root, 'dist', 'cli.js');
const dir = mkdtempSync(path.join(tmpdir(), 'deflator-large-'));
const only = (() => {
  const i = process.argv.indexOf('--only');
  return i > 0 ? process.argv[i + 1] : undefined;
})();

const seeded = mulberry32;
/** Standard normal by Box-Muller. */
function normal(rand: () => number): () => number {
  return () => Math.sqrt(-2 * Math.log(1 - rand())) * Math.cos(2 * Math.PI * rand());
}

async function writeLines(file: string, produce: (write: (s: string) => Promise<void>) => Promise<void>): Promise<void> {
  const out = createWriteStream(file);
  const write = (s: string) => (out.write(s) ? Promise.resolve() : new Promise<void>((r) => out.once('drain', () => r())));
  await produce(write);
  await new Promise<void>((r) => out.end(() => r()));
}

interface Measured {
  seconds: number;
  rssMb: number | null;
  status: number | null;
  stdout: string;
  stderr: string;
}

function run(args: string[]): Measured {
  const useTime = existsSync('/usr/bin/time');
  const t0 = performance.now();
  const r = useTime
    ? spawnSync('/usr/bin/time', ['-v', process.execPath, cli, ...args], { encoding: 'utf8', maxBuffer: 1 << 28 })
    : spawnSync(process.execPath, [cli, ...args], { encoding: 'utf8', maxBuffer: 1 << 28 });
  const seconds = (performance.now() - t0) / 1000;
  const m = /Maximum resident set size \(kbytes\): (\d+)/.exec(r.stderr ?? '');
  return { seconds, rssMb: m ? Number(m[1]) / 1024 : null, status: r.status, stdout: r.stdout ?? '', stderr: r.stderr ?? '' };
}

const rows: { step: string; seconds: number; rssMb: number | null; ceiling: number; ok: boolean; note: string }[] = [];
let failed = false;
function record(step: string, m: Measured, ceiling: number, note: string): void {
  const within = m.rssMb === null || m.rssMb <= ceiling;
  const ok = m.status === 0 && within;
  if (!ok) failed = true;
  rows.push({ step, seconds: m.seconds, rssMb: m.rssMb, ceiling, ok, note: m.status === 0 ? note : `${m.stderr.split('\n').filter((l) => l.startsWith('deflator') || l.startsWith('  ->')).join(' ').slice(0, 300)}` });
  process.stdout.write(`${step}: ${m.seconds.toFixed(1)} s, peak RSS ${m.rssMb === null ? 'n/a' : `${m.rssMb.toFixed(0)} MB`} (ceiling ${ceiling} MB)${ok ? '' : '  <-- FAILED'}\n`);
  if (m.status !== 0) process.stdout.write(`${m.stderr.slice(-2000)}\n`);
}

/** Last calendar day of month index m (months since year 0). */
const monthEnd = (m: number) => new Date(Date.UTC(Math.floor(m / 12), (m % 12) + 1, 0)).toISOString().slice(0, 10);

/**
 * Monthly prices of N assets from a K-factor model: r_it = rf + beta_i'f_t + e_it, with
 * prices P_it = P_i,t-1 (1 + r_it); the factors file holds f_t (excess returns), the
 * risk-free file rf (a per-period rate).
 */
async function monthlyMarket(prefix: string, N: number, K: number, T: number, firstMonth: number, seed: number): Promise<{ prices: string; factors: string; riskfree: string; factorNames: string[] }> {
  const rand = seeded(seed);
  const z = normal(rand);
  const names = Array.from({ length: N }, (_, i) => `${prefix}-${String(i).padStart(4, '0')}`);
  const factorNames = Array.from({ length: K }, (_, k) => `swell${k + 1}`);
  const beta = names.map(() => factorNames.map((_, k) => (k === 0 ? 0.6 + 0.8 * rand() : -0.5 + rand())));
  const f: number[][] = [];
  for (let t = 0; t < T; t++) f.push(factorNames.map((_, k) => (k === 0 ? 0.005 : 0.002) + (k === 0 ? 0.045 : 0.03) * z()));
  const rf = Array.from({ length: T }, (_, t) => 0.002 + 0.001 * Math.sin(t / 40));
  const files = { prices: path.join(dir, `${prefix}_prices.csv`), factors: path.join(dir, `${prefix}_factors.csv`), riskfree: path.join(dir, `${prefix}_rf.csv`) };
  const price = names.map(() => 20 + 60 * rand());
  await writeLines(files.prices, async (write) => {
    await write('date,asset,price\n');
    let block = '';
    for (let i = 0; i < N; i++) block += `${monthEnd(firstMonth)},${names[i]},${price[i].toFixed(6)}\n`;
    await write(block);
    for (let t = 0; t < T; t++) {
      block = '';
      for (let i = 0; i < N; i++) {
        let r = rf[t] + 0.04 * z();
        for (let k = 0; k < K; k++) r += beta[i][k] * f[t][k];
        price[i] *= 1 + r;
        block += `${monthEnd(firstMonth + t + 1)},${names[i]},${price[i].toPrecision(10)}\n`;
      }
      await write(block);
    }
  });
  writeFileSync(files.factors, `date,${factorNames.join(',')}\n${f.map((row, t) => `${monthEnd(firstMonth + t + 1)},${row.map((v) => v.toFixed(8)).join(',')}`).join('\n')}\n`);
  writeFileSync(files.riskfree, `date,tide_rate\n${rf.map((v, t) => `${monthEnd(firstMonth + t + 1)},${v.toFixed(8)}`).join('\n')}\n`);
  return { ...files, factorNames };
}

function importMarket(db: string, m: { prices: string; factors: string; riskfree: string }): void {
  for (const args of [
    ['import', 'prices', m.prices, '--db', db, '--json'],
    ['import', 'series', m.factors, '--db', db, '--kind', 'factor', '--json'],
    ['import', 'series', m.riskfree, '--db', db, '--kind', 'riskfree', '--json'],
  ]) {
    const r = spawnSync(process.execPath, [cli, ...args], { encoding: 'utf8', maxBuffer: 1 << 26 });
    if (r.status !== 0) throw new Error(`${args.slice(0, 3).join(' ')} failed:\n${r.stderr}`);
  }
}

try {
  if (!only || only === 'import') {
    // 1. 5,000,000-row import
    const ASSETS = 2000;
    const DAYS = 2500;
    const csv = path.join(dir, 'five_million.csv');
    const t0 = performance.now();
    const rand = seeded(5);
    await writeLines(csv, async (write) => {
      await write('date,asset,price,dividend\n');
      const d = new Date(Date.UTC(2010, 0, 4));
      const price = Array.from({ length: ASSETS }, () => 20 + 80 * rand());
      for (let t = 0; t < DAYS; ) {
        const wd = d.getUTCDay();
        if (wd !== 0 && wd !== 6) {
          const day = d.toISOString().slice(0, 10);
          let block = '';
          for (let i = 0; i < ASSETS; i++) {
            price[i] *= 1 + 0.0003 + 0.015 * (rand() + rand() + rand() - 1.5);
            block += `${day},reef${String(i).padStart(4, '0')},${price[i].toFixed(4)},${i % 3 === 0 && t % 63 === 62 ? (price[i] * 0.005).toFixed(4) : ''}\n`;
          }
          await write(block);
          t++;
        }
        d.setUTCDate(d.getUTCDate() + 1);
      }
    });
    process.stdout.write(`generated ${(ASSETS * DAYS).toLocaleString('en')} rows, ${(statSync(csv).size / 1e6).toFixed(0)} MB, in ${((performance.now() - t0) / 1000).toFixed(1)} s\n`);
    const db = path.join(dir, 'five_million.db');
    const imp = run(['import', 'prices', csv, '--db', db, '--json']);
    const stored = imp.status === 0 ? (JSON.parse(imp.stdout) as { rowsStored: number }).rowsStored : 0;
    if (imp.status === 0 && stored !== ASSETS * DAYS) (imp.status = 1), (imp.stderr = `deflator: stored ${stored} rows, expected ${ASSETS * DAYS}`);
    record('import 5,000,000 rows (CLI)', imp, 600, `${Math.round(stored / imp.seconds).toLocaleString('en')} rows/s`);
    const info = run(['info', '--db', db]);
    record('info on the 5,000,000-row database', info, 600, 'coverage of 2,000 assets');
    const t1 = performance.now();
    const check = new Database(db, { readonly: true });
    const integrity = check.pragma('integrity_check', { simple: true });
    check.close();
    process.stdout.write(`PRAGMA integrity_check: ${String(integrity)} (${((performance.now() - t1) / 1000).toFixed(1)} s); database ${(statSync(db).size / 1e6).toFixed(0)} MB\n`);
    if (integrity !== 'ok') failed = true;
    rmSync(csv);
  }

  if (!only || only === 'fit' || only === 'fit-short') {
    // 2. a 2,000-asset monthly panel, 360 months, K = 3
    const m = await monthlyMarket('gull', 2000, 3, 360, 1990 * 12, 11);
    const db = path.join(dir, 'panel.db');
    const t0 = performance.now();
    importMarket(db, m);
    process.stdout.write(`2,000 x 361 monthly prices imported in ${((performance.now() - t0) / 1000).toFixed(1)} s\n`);
    const base = { frequency: 'monthly', returns: 'excess', riskfree: 'tide_rate', assets: 'all', model: { kind: 'linear', factors: m.factorNames } };
    // with N > T the GRS statistic, the two-pass pricing-error test and GMM's S do not exist:
    // each method must refuse with a clear message (and within the ceiling)
    const refusals: readonly [string, Record<string, unknown>, RegExp][] = [
      ['two-pass (Fama-MacBeth) regressions', { method: 'two-pass' }, /the pricing-error test needs more periods than its 1996 degrees of freedom/],
      ['time-series regressions', { method: 'time-series' }, /the GRS test needs T > N \+ K/],
      ['GMM, first stage, identity weighting', { method: 'gmm', stage: 'first', weight: 'identity', lags: 3 }, /cannot estimate the 2003 x 2003 long-run covariance/],
    ];
    for (const [label, estimator, refusal] of refusals) {
      const spec = path.join(dir, `fit-${String(estimator.method)}.json`);
      writeFileSync(spec, JSON.stringify({ ...base, label, estimator }));
      const r = run(['fit', spec, '--db', db, '--json', '--no-record']);
      let note = '';
      const said = r.stderr.split('\n').find((l) => l.startsWith('deflator: ')) ?? '';
      if (r.status === 1 && refusal.test(said)) {
        r.status = 0;
        note = `refused as expected (N > T): "${said.slice('deflator: '.length, 150)}"`;
      } else if (r.status === 0) {
        r.status = 1;
        r.stderr = `deflator: expected a refusal matching ${refusal}, got a result`;
      }
      record(`fit 2,000 assets x 360 months, K=3: ${label}`, r, 1500, note);
    }
  }

  if (!only || only === 'fit' || only === 'fit-long') {
    // 2b. the same 2,000 assets over 2,400 months (T > N + K): every method runs
    const m = await monthlyMarket('skua', 2000, 3, 2400, 1800 * 12, 13);
    const db = path.join(dir, 'panel_long.db');
    const t0 = performance.now();
    importMarket(db, m);
    process.stdout.write(`2,000 x 2,401 monthly prices imported in ${((performance.now() - t0) / 1000).toFixed(1)} s\n`);
    const base = { frequency: 'monthly', returns: 'excess', riskfree: 'tide_rate', assets: 'all', model: { kind: 'linear', factors: m.factorNames } };
    for (const [label, estimator] of [
      ['two-pass (Fama-MacBeth) regressions', { method: 'two-pass' }],
      ['time-series regressions with GRS', { method: 'time-series' }],
      ['GMM, first stage, identity weighting', { method: 'gmm', stage: 'first', weight: 'identity', lags: 3 }],
    ] as const) {
      const spec = path.join(dir, `fit-long-${estimator.method}.json`);
      writeFileSync(spec, JSON.stringify({ ...base, label, estimator }));
      const r = run(['fit', spec, '--db', db, '--json', '--no-record']);
      let note = '';
      if (r.status === 0) {
        const res = JSON.parse(r.stdout) as { sample: { N: number; T: number; K: number }; test?: { name: string; stat: number; p: number } | null };
        note = `N=${res.sample.N}, T=${res.sample.T}, K=${res.sample.K}${res.test ? `; ${res.test.name} = ${res.test.stat.toFixed(2)}, p = ${res.test.p.toFixed(3)}` : ''}`;
      }
      record(`fit 2,000 assets x 2,400 months, K=3: ${label}`, r, 1500, note);
    }
  }

  if (!only || only === 'backtest') {
    // 3. N = 100, K = 5, T = 1,200, 960 rolling windows of 240
    const m = await monthlyMarket('tern', 100, 5, 1200, 1900 * 12, 23);
    const db = path.join(dir, 'backtest.db');
    importMarket(db, m);
    const spec = path.join(dir, 'backtest.json');
    writeFileSync(spec, JSON.stringify({ frequency: 'monthly', returns: 'excess', riskfree: 'tide_rate', assets: 'all', label: 'five factors, 960 windows', model: { kind: 'linear', factors: m.factorNames }, estimator: { method: 'gmm', stage: 'second', lags: 3 }, backtest: { window: 240, step: 1, horizon: 1 } }));
    const r = run(['backtest', spec, '--db', db, '--json', '--no-record']);
    let note = '';
    if (r.status === 0) {
      const res = JSON.parse(r.stdout) as { windows: number; windowsFailed: number; oos: { rmse: number } };
      if (res.windows !== 960) (r.status = 1), (r.stderr = `deflator: ${res.windows} windows, expected 960`);
      note = `${res.windows} windows (${res.windowsFailed} failed), out-of-sample RMSE ${res.oos.rmse.toExponential(3)}`;
    }
    record('backtest N=100, K=5, T=1,200, 960 windows (CLI, 2 threads)', r, 1000, note);
  }

  process.stdout.write('\n| step | seconds | peak RSS | ceiling | result |\n| --- | --- | --- | --- | --- |\n');
  for (const r of rows) process.stdout.write(`| ${r.step} | ${r.seconds.toFixed(1)} | ${r.rssMb === null ? 'n/a' : `${r.rssMb.toFixed(0)} MB`} | ${r.ceiling} MB | ${r.ok ? 'ok' : 'FAILED'}${r.note ? `: ${r.note}` : ''} |\n`);
} finally {
  if (process.argv.includes('--keep')) process.stdout.write(`kept ${dir}\n`);
  else rmSync(dir, { recursive: true, force: true });
}
process.exit(failed ? 1 : 0);
