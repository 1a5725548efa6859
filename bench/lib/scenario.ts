/**
 * Invented, seeded data for the benchmarks (shared/random.ts mulberry32): a daily market
 * of N assets over T weekdays driven by K factors, written as the CSV files a user would
 * import (long prices, wide factors, a per-period risk-free rate), and imported into a
 * project database through the CLI. The numpy scripts beside each benchmark read the same
 * CSV files.
 */
import { spawnSync } from 'node:child_process';
import { createWriteStream, existsSync } from 'node:fs';
import path from 'node:path';
import { mulberry32 } from '../../shared/random.js';
import { parseFitSpec, type FitSpec } from '../../shared/spec.js';

export const ROOT = path.resolve(import.meta.dirname, '..', '..');
export const CLI = path.join(ROOT, 'dist', 'cli.js');

export interface DailyScenario {
  dir: string;
  prices: string;
  factors: string;
  riskfree: string;
  db: string;
  N: number;
  K: number;
  T: number;
  factorNames: string[];
}

/** The fit spec whose panel the daily-panel benchmarks read: excess returns over the overnight rate, the scenario's factors. */
export function dailyPanelSpec(factorNames: readonly string[]): FitSpec {
  return parseFitSpec({ frequency: 'daily', returns: 'excess', riskfree: 'overnight', model: { kind: 'linear', factors: [...factorNames] }, estimator: { stage: 'second', lags: 5 } });
}

async function writeLines(file: string, produce: (write: (s: string) => Promise<void>) => Promise<void>): Promise<void> {
  const out = createWriteStream(file);
  const write = (s: string) => (out.write(s) ? Promise.resolve() : new Promise<void>((r) => out.once('drain', () => r())));
  await produce(write);
  await new Promise<void>((r) => out.end(() => r()));
}

/** The first T weekdays from 1985-01-02, as ISO dates. */
export function weekdays(T: number): string[] {
  const out: string[] = [];
  let t = Date.UTC(1985, 0, 2);
  while (out.length < T) {
    const d = new Date(t);
    const w = d.getUTCDay();
    if (w !== 0 && w !== 6) out.push(d.toISOString().slice(0, 10));
    t += 86_400_000;
  }
  return out;
}

/** The last weekday of each of T months from January 1975. */
export function monthEnds(T: number): string[] {
  const out: string[] = [];
  for (let m = 0; m < T; m++) {
    let t = Date.UTC(1975, m + 1, 0);
    for (;;) {
      const w = new Date(t).getUTCDay();
      if (w !== 0 && w !== 6) break;
      t -= 86_400_000;
    }
    out.push(new Date(t).toISOString().slice(0, 10));
  }
  return out;
}

/**
 * Writes prices.csv (long: date,asset,price; T + 1 rows per asset so that there are T
 * returns), factors.csv (wide, decimal returns) and riskfree.csv (per-period rate), then
 * imports them into scenario.db with the CLI. Reuses files that exist. Daily (weekdays) by
 * default; monthly (month ends) with `monthly`.
 */
export async function dailyScenario(dir: string, N: number, T: number, K = 3, seed = 20260614, monthly = false): Promise<DailyScenario> {
  const factorNames = Array.from({ length: K }, (_, k) => `drift${k + 1}`);
  const s: DailyScenario = { dir, prices: path.join(dir, 'prices.csv'), factors: path.join(dir, 'factors.csv'), riskfree: path.join(dir, 'riskfree.csv'), db: path.join(dir, 'scenario.db'), N, K, T, factorNames };
  if (existsSync(s.db)) return s;
  const u = mulberry32(seed);
  const normal = () => Math.sqrt(-2 * Math.log(1 - u())) * Math.cos(2 * Math.PI * u());
  const dates = monthly ? monthEnds(T + 1) : weekdays(T + 1);
  const scale = monthly ? 4.5 : 1; // monthly moves about sqrt(21) times a daily one
  const f = Array.from({ length: K }, (_, k) => Float64Array.from({ length: T + 1 }, () => scale * (0.0002 + 0.00005 * k + 0.01 * normal())));
  const rf = Float64Array.from({ length: T + 1 }, (_, t) => (monthly ? 20 : 1) * (0.0001 + 0.00002 * Math.sin(t / 500)));
  await writeLines(s.factors, async (w) => {
    await w(`date,${factorNames.join(',')}\n`);
    for (let t = 1; t <= T; t++) await w(`${dates[t]},${f.map((x) => x[t].toFixed(6)).join(',')}\n`);
  });
  await writeLines(s.riskfree, async (w) => {
    await w('date,overnight\n');
    for (let t = 1; t <= T; t++) await w(`${dates[t]},${rf[t].toFixed(8)}\n`);
  });
  const beta = Array.from({ length: N }, () => Array.from({ length: K }, () => 0.3 + 1.2 * u()));
  const price = Array.from({ length: N }, () => 20 + 80 * u());
  await writeLines(s.prices, async (w) => {
    await w('date,asset,price\n');
    for (let t = 0; t <= T; t++) {
      let lines = '';
      for (let i = 0; i < N; i++) {
        if (t > 0) {
          let r = rf[t] + scale * 0.01 * normal();
          for (let k = 0; k < K; k++) r += beta[i][k] * f[k][t];
          price[i] = Math.max(0.01, price[i] * (1 + r));
        }
        lines += `${dates[t]},asset${String(i + 1).padStart(3, '0')},${price[i].toFixed(4)}\n`;
      }
      await w(lines);
    }
  });
  const imp = (args: string[]) => {
    const r = spawnSync(process.execPath, [CLI, 'import', ...args, '--db', s.db], { encoding: 'utf8' });
    if (r.status !== 0) throw new Error(`import ${args.join(' ')} failed: ${r.stderr}`);
  };
  imp(['prices', s.prices, '--max-return', '0.9']);
  imp(['series', s.factors, '--kind', 'factor']);
  imp(['series', s.riskfree, '--kind', 'riskfree', '--rf-form', 'rate']);
  return s;
}
