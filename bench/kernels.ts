/**
 * The numerical kernel layer at large cross-sections, in process, beside numpy with
 * OpenBLAS (one thread) on the same numbers:
 *
 *   1. Gram kernel: X'X of q return series of length T = 2,400 (q = 250 .. 2,000), GFLOP/s
 *      counted as q (q + 1) T (the symmetric half: q(q+1)/2 entries of 2T flops), for the
 *      WebAssembly SIMD route, the plain JavaScript route, and numpy's X.T @ X (BLAS syrk);
 *   2. one second-stage fit of the demeaned linear model, N = 1,000 and 2,000 test assets,
 *      K = 3, T = 2,400, L = 3: the estimation with its inference (deflator gmmEstimate;
 *      numpy gmm_linear.second_stage_fit without the HJ part), and the whole fit (deflator
 *      fit(): also the HJ distance with its Jagannathan-Wang weights and the volatility
 *      bound; numpy: the same with hj=True). Goal: the estimation within 3x of numpy.
 *
 * CPU seconds (this process's user + system; numpy's process_time), best of the runs.
 *   npm run bench -- kernels          options: --sizes 1000,2000  --reps N (default 3)  --no-whole
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { fit } from '../shared/estimation/fit.js';
import { gmmEstimate } from '../shared/estimation/gmm.js';
import { prepareGmm } from '../shared/estimation/gmmFit.js';
import { gramRoute, jsGram, wasmGram } from '../shared/linalg/gramKernel.js';
import type { ReturnsPanel } from '../shared/panel.js';
import { mulberry32 } from '../shared/random.js';
import { parseFitSpec } from '../shared/spec.js';
import { blasLine, haveNumpy, machineLine, numpyCommand, out, ROOT, table, timeHere } from './lib/anchor.js';

const arg = (name: string): string | undefined => {
  const i = process.argv.indexOf(name);
  return i > 0 ? process.argv[i + 1] : undefined;
};
const sizes = (arg('--sizes') ?? '1000,2000').split(',').map(Number);
const reps = Number(arg('--reps') ?? 3);
const whole = !process.argv.includes('--no-whole');
const T = 2400;
const K = 3;
const LAGS = 3;
const NMAX = Math.max(...sizes);

function makePanel(N: number): ReturnsPanel {
  const u = mulberry32(4242);
  const normal = () => Math.sqrt(-2 * Math.log(1 - u())) * Math.cos(2 * Math.PI * u());
  const factors = Array.from({ length: K }, (_, k) => Float64Array.from({ length: T }, () => 0.004 + 0.001 * k + 0.04 * normal()));
  const returns = Array.from({ length: N }, () => {
    const b = Array.from({ length: K }, () => 0.2 + 1.2 * u());
    return Float64Array.from({ length: T }, (_, t) => 0.0005 * normal() + b.reduce((s, bk, k) => s + bk * factors[k][t], 0) + 0.05 * normal());
  });
  return {
    frequency: 'monthly',
    periods: Array.from({ length: T }, (_, t) => `${1800 + Math.floor(t / 12)}-${String((t % 12) + 1).padStart(2, '0')}-28`),
    assets: returns.map((_, i) => `A${i + 1}`),
    returnKind: 'excess',
    returns,
    factors: factors.map((values, k) => ({ name: `F${k + 1}`, values })),
    sampleNotes: [],
  };
}

/** Row-major T x n float64 file of the columns given (numpy reads it with fromfile). */
function writeMatrix(file: string, cols: readonly Float64Array[]): void {
  const n = cols.length;
  const m = new Float64Array(T * n);
  for (let j = 0; j < n; j++) for (let t = 0; t < T; t++) m[t * n + j] = cols[j][t];
  writeFileSync(file, new Uint8Array(m.buffer));
}

function bestCpu(fn: () => void, n: number): number {
  fn();
  let best = Infinity;
  for (let r = 0; r < n; r++) best = Math.min(best, timeHere(fn).cpu);
  return best;
}

const gf = (q: number, secs: number) => (q * (q + 1) * T) / secs / 1e9;

const dir = mkdtempSync(path.join(tmpdir(), 'deflator-bench-kernels-'));
try {
  out(`Kernel layer in process: T = ${T}; ${machineLine()}; products route here: ${gramRoute()}`);
  const big = makePanel(NMAX);
  writeMatrix(path.join(dir, 'returns.f64'), big.returns);
  writeMatrix(path.join(dir, 'factors.f64'), big.factors.map((f) => f.values));
  const gramQs = [250, 500, 1000, 2000].filter((q) => q <= NMAX);
  let np: { gram: Record<string, number>; estimate: number; fit: number; b: number[]; J: number } | null = null;
  const npBySize = new Map<number, { estimate: number; fit: number; b: number[]; J: number }>();
  if (haveNumpy()) {
    out(`anchor: ${blasLine()}`);
    for (const N of sizes) {
      // numpy reads the first N columns: write each size's own files
      const sub = path.join(dir, `n${N}`);
      spawnSync('mkdir', ['-p', sub]);
      writeMatrix(path.join(sub, 'returns.f64'), big.returns.slice(0, N));
      writeMatrix(path.join(sub, 'factors.f64'), big.factors.map((f) => f.values));
      const c = numpyCommand(path.join(ROOT, 'bench/numpy/kernels.py'), [sub, String(T), String(N), String(K), String(LAGS), String(reps), N === NMAX ? gramQs.join(',') : '']);
      const r = spawnSync(c.cmd, c.args, { encoding: 'utf8', maxBuffer: 1 << 26 });
      if (r.status !== 0) throw new Error(`numpy failed: ${r.stderr}`);
      const j = JSON.parse(r.stdout) as { gram: Record<string, number>; estimate: number; fit: number; b: number[]; J: number };
      npBySize.set(N, j);
      if (N === NMAX) np = j;
    }
  } else out('anchor: numpy skipped (Debian python3-numpy not installed)');

  out('');
  out('Gram kernel X\'X, T = 2,400 (GFLOP/s = q(q+1)T / CPU seconds, best of the runs)');
  const rows: string[][] = [];
  for (const q of gramQs) {
    const x = big.returns.slice(0, q);
    const w = bestCpu(() => void wasmGram(x, x), reps);
    const j = bestCpu(() => void jsGram(x, x), q >= 2000 ? 1 : reps);
    const n = np?.gram[String(q)];
    rows.push([String(q), `${gf(q, w).toFixed(2)} (${(w * 1000).toFixed(0)} ms)`, `${gf(q, j).toFixed(2)} (${(j * 1000).toFixed(0)} ms)`, n ? `${gf(q, n).toFixed(2)} (${(n * 1000).toFixed(0)} ms)` : '-', n ? `${(w / n).toFixed(1)}x` : '-']);
  }
  table(['q', 'WebAssembly SIMD, GFLOP/s', 'JavaScript, GFLOP/s', 'numpy/OpenBLAS, GFLOP/s', 'SIMD time / OpenBLAS time'], rows);

  out('');
  out(`Second-stage fit, demeaned linear SDF, K = ${K}, T = ${T}, L = ${LAGS} (CPU seconds, best of the runs)`);
  const fitRows: string[][] = [];
  for (const N of sizes) {
    const panel = makePanel(N);
    const spec = parseFitSpec({ returns: 'excess', riskfree: 'rf', model: { kind: 'linear', factors: panel.factors.map((f) => f.name) }, estimator: { stage: 'second', lags: LAGS } });
    const prep = prepareGmm(spec, panel);
    let est = gmmEstimate(prep.model, prep.options);
    const e = bestCpu(() => {
      est = gmmEstimate(prep.model, prep.options);
    }, N >= 2000 ? 1 : reps);
    let wholeCpu = NaN;
    let J = NaN;
    if (whole) {
      const t = timeHere(() => {
        const r = fit(spec, panel);
        J = r.tests.find((x) => x.name === 'Hansen J')?.stat ?? NaN;
      });
      wholeCpu = t.cpu;
    }
    const n = npBySize.get(N);
    const agree = n ? Math.max(...n.b.map((v, k) => Math.abs(v - est.theta[k]) / Math.abs(v))) : NaN;
    fitRows.push([
      String(N),
      `${e.toFixed(2)} s`,
      n ? `${n.estimate.toFixed(2)} s` : '-',
      n ? `${(e / n.estimate).toFixed(1)}x` : '-',
      whole ? `${wholeCpu.toFixed(2)} s` : '-',
      n ? `${n.fit.toFixed(2)} s` : '-',
      n && whole ? `${(wholeCpu / n.fit).toFixed(1)}x` : '-',
      n ? `b ${agree.toExponential(1)}${whole ? `, J ${(Math.abs(J - n.J) / n.J).toExponential(1)}` : ''}` : '-',
    ]);
  }
  table(['N', 'deflator estimation + inference', 'numpy', 'ratio (goal <= 3x)', 'deflator whole fit (HJ, JW weights, bound)', 'numpy (same)', 'ratio', 'largest relative difference'], fitRows);
} finally {
  rmSync(dir, { recursive: true, force: true });
}
