/**
 * GMM fit benchmark: one fit of the demeaned linear model, N = 100 test assets, K = 5
 * factors, T = 1,200 periods, second stage, Newey-West with L = 6 lags, on seeded data.
 * Times the whole fit() (estimate, inference, HJ distance with its p-value, bound) and
 * the estimation stages alone, then runs bench/fit_gmm.R, which does the same
 * second-stage fit with R's gmm package on the same numbers (only where Rscript exists).
 *
 *   npm run bench -- fit        (or: npx tsx bench/fit.ts)
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { fit } from '../shared/estimation/fit.js';
import { gmmEstimate } from '../shared/estimation/gmm.js';
import { prepareGmm } from '../shared/estimation/gmmFit.js';
import type { ReturnsPanel } from '../shared/panel.js';
import { parseFitSpec } from '../shared/spec.js';
import { mulberry32 } from '../shared/random.js';

const N = 100;
const K = 5;
const T = 1200;
const LAGS = 6;

const seeded = mulberry32;

const u = seeded(20240612);
const normal = () => Math.sqrt(-2 * Math.log(1 - u())) * Math.cos(2 * Math.PI * u());
const factors = Array.from({ length: K }, (_, k) => Float64Array.from({ length: T }, () => 0.003 + 0.001 * k + 0.04 * normal()));
const betas = Array.from({ length: N }, () => Array.from({ length: K }, () => 0.2 + 1.2 * u()));
const returns = betas.map((bi) => Float64Array.from({ length: T }, (_, t) => 0.0005 * normal() + bi.reduce((s, b, k) => s + b * factors[k][t], 0) + 0.04 * normal()));
const periods = Array.from({ length: T }, (_, t) => `${1900 + Math.floor(t / 12)}-${String((t % 12) + 1).padStart(2, '0')}-28`);
const panel: ReturnsPanel = {
  frequency: 'monthly',
  periods,
  assets: returns.map((_, i) => `A${i + 1}`),
  returnKind: 'excess',
  returns,
  factors: factors.map((values, k) => ({ name: `F${k + 1}`, values })),
  sampleNotes: [],
};
const spec = parseFitSpec({ returns: 'excess', riskfree: 'rf', model: { kind: 'linear', factors: factors.map((_, k) => `F${k + 1}`) }, estimator: { stage: 'second', lags: LAGS } });

function timeIt(fn: () => void, reps: number): { median: number; min: number } {
  fn(); // warm-up (JIT)
  const ms: number[] = [];
  for (let r = 0; r < reps; r++) {
    const t0 = performance.now();
    fn();
    ms.push(performance.now() - t0);
  }
  ms.sort((a, b) => a - b);
  return { median: ms[Math.floor(ms.length / 2)], min: ms[0] };
}

let result = fit(spec, panel);
const full = timeIt(() => {
  result = fit(spec, panel);
}, 7);
const prep = prepareGmm(spec, panel);
const stages = timeIt(() => {
  gmmEstimate(prep.model, prep.options);
}, 7);
process.stdout.write(`deflator fit: demeaned linear SDF, N = ${N}, K = ${K}, T = ${T}, second stage, L = ${LAGS}\n`);
process.stdout.write(`  whole fit() (estimate, s.e., tests, HJ distance + p-value, bound): median ${full.median.toFixed(1)} ms, min ${full.min.toFixed(1)} ms (7 runs after a warm-up)\n`);
process.stdout.write(`  estimation stages only (first + second stage, inference): median ${stages.median.toFixed(1)} ms, min ${stages.min.toFixed(1)} ms\n`);
process.stdout.write(`  J = ${result.tests.find((t) => t.name === 'Hansen J')?.stat.toFixed(4)}, b.F1 = ${result.params[0].estimate.toPrecision(10)}\n`);

const have = spawnSync('Rscript', ['--version'], { encoding: 'utf8' });
if (have.error || have.status !== 0) {
  process.stdout.write('R gmm: skipped: R not installed\n');
} else {
  const dir = mkdtempSync(path.join(tmpdir(), 'deflator-bench-'));
  try {
    const csv = (cols: Float64Array[]) => Array.from({ length: T }, (_, t) => cols.map((c) => String(c[t])).join(',')).join('\n');
    writeFileSync(path.join(dir, 'returns.csv'), csv(returns));
    writeFileSync(path.join(dir, 'factors.csv'), csv(factors));
    const r = spawnSync('Rscript', [path.join(import.meta.dirname, 'fit_gmm.R'), dir, String(LAGS)], { encoding: 'utf8' });
    if (r.status !== 0) process.stdout.write(`R gmm: failed (${r.stderr.trim().split('\n').pop()})\n`);
    else {
      process.stdout.write(r.stdout);
      const rel = (x: string) => (Math.abs(Number(x) - result.params[0].estimate) / Math.abs(result.params[0].estimate)).toExponential(2);
      const m = /J = [-\d.e]+, b\.F1 = ([-\d.e]+)/.exec(r.stdout);
      const c = /convergence .*b\.F1 = ([-\d.e]+)/.exec(r.stdout);
      if (m) process.stdout.write(`  b.F1 relative difference deflator vs R gmm: ${rel(m[1])} (optim at its default reltol = 1e-8)${c ? `; vs R run to convergence: ${rel(c[1])}` : ''}\n`);
    }
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}
