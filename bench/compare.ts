/**
 * The demo comparison (sample-data/specs/compare-factor-models.json: one-factor and
 * three-factor linear SDFs and the consumption model) with 499 bootstrap replications:
 * the time per replication of the HJ bootstrap in this process (every model's HJ^2 on the
 * replication; the consumption model started from its full-sample estimate), beside
 * bench/numpy/hj_bootstrap.py on the same panels and the same replication indices, and the
 * agreement of the two sets of HJ^2. Also the whole `deflator compare` command once (fits,
 * back-tests, bootstrap, run record) for scale.
 *
 *   npm run bench -- compare          options: --reps N (default 499)
 */
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { spawnSync } from 'node:child_process';
import { alignPanels, bootstrapChunk, hjBootstrapDraws } from '../shared/compare/index.js';
import { replicationIndices, blockLength } from '../shared/bootstrap/blocks.js';
import { parseCompareSpec } from '../shared/spec.js';
import { buildDemo } from '../src-main/data/demo.js';
import { loadPanel } from '../src-main/data/panel.js';
import { Store } from '../src-main/store/store.js';
import { fittedHjSquared, fittedHjStart } from '../src-main/workers/tasks.js';
import { blasLine, haveNumpy, machineLine, numpyCommand, out, ROOT, table, timeHere, timeProcess } from './lib/anchor.js';

const reps = Number(process.argv[process.argv.indexOf("--reps") + 1]) || 499;
const dir = mkdtempSync(path.join(tmpdir(), 'deflator-bench-compare-'));
try {
  const db = path.join(dir, 'demo.db');
  await buildDemo(db);
  const specFile = path.join(ROOT, 'sample-data/specs/compare-factor-models.json');
  const { spec, fits } = parseCompareSpec(JSON.parse(readFileSync(specFile, 'utf8')));
  const store = new Store(db, { mustExist: true });
  const { panels } = alignPanels(fits.map((f) => loadPanel(store, f)));
  store.close();
  const T = panels[0].periods.length;
  const N = panels[0].returns.length;
  const members = fits.map((_, i) => i);
  const chunk = { ...bootstrapChunk({ ...spec, bootstrap: { ...(spec.bootstrap ?? { block: 'auto', seed: 20261201 }), replications: reps } } as typeof spec, fits, panels, members, 0, reps) };
  out(`Demo comparison, HJ bootstrap: N = ${N}, T = ${T}, ${reps} replications of blocks of ${chunk.block}, 3 models (two linear in closed form, the consumption model by its solver); ${machineLine()}`);
  // deflator, in process
  const deps = { hjSquared: fittedHjSquared, hjStart: fittedHjStart };
  hjBootstrapDraws({ ...chunk, to: Math.min(20, reps) }, deps); // warm-up
  let draws = hjBootstrapDraws(chunk, deps);
  const t = timeHere(() => {
    draws = hjBootstrapDraws(chunk, deps);
  });
  const per = t.cpu / reps;
  const rows: string[][] = [['deflator (this process)', `${(per * 1000).toFixed(2)} ms`, `${((t.wall / reps) * 1000).toFixed(2)} ms`]];
  let agreement = '';
  if (haveNumpy()) {
    out(`anchor: ${blasLine()}`);
    const col = (s: Float64Array[]) => {
      const m = new Float64Array(T * s.length);
      s.forEach((x, j) => x.forEach((v, i) => (m[i * s.length + j] = v)));
      return new Uint8Array(m.buffer);
    };
    writeFileSync(path.join(dir, 'R.f64'), col(panels[2].returns));
    writeFileSync(path.join(dir, 'f1.f64'), col(panels[0].factors.map((f) => f.values)));
    writeFileSync(path.join(dir, 'f3.f64'), col(panels[1].factors.map((f) => f.values)));
    writeFileSync(path.join(dir, 'g.f64'), new Uint8Array(Float64Array.from(panels[2].consumptionGrowth!).buffer));
    const idx = new Int32Array(reps * T);
    for (let r = 0; r < reps; r++) idx.set(replicationIndices(T, blockLength(T, chunk.block), chunk.seed, r), r * T);
    writeFileSync(path.join(dir, 'idx.i32'), new Uint8Array(idx.buffer));
    const c = numpyCommand(path.join(ROOT, 'bench/numpy/hj_bootstrap.py'), [dir, String(T), String(N), String(reps)]);
    const r = spawnSync(c.cmd, c.args, { encoding: 'utf8', maxBuffer: 1 << 26 });
    if (r.status !== 0) throw new Error(`numpy failed: ${r.stderr}`);
    const np = JSON.parse(r.stdout) as { perReplication: number; values: number[][] };
    rows.push(['numpy (bench/numpy/hj_bootstrap.py)', `${(np.perReplication * 1000).toFixed(2)} ms`, '-']);
    let largest = 0;
    for (let i = 0; i < reps; i++) for (let m = 0; m < 3; m++) {
      const a = draws.values[i * 3 + m];
      const b = np.values[i][m];
      largest = Math.max(largest, Math.abs(a - b) / Math.abs(b));
    }
    agreement = `HJ^2 on the same replications, deflator vs numpy: largest relative difference ${largest.toExponential(1)} (${reps * 3} values)`;
    rows.push(['deflator / numpy', `${(per / np.perReplication).toFixed(2)}x`, '']);
  } else out('anchor: numpy skipped (Debian python3-numpy not installed)');
  out('');
  table(['per replication (3 models)', 'CPU', 'wall'], rows);
  if (agreement) out(agreement);
  const whole = timeProcess(process.execPath, [path.join(ROOT, 'bin/deflator.js'), 'compare', specFile, '--db', db, '--replications', String(reps), '--no-record']);
  out(`whole \`deflator compare\` (3 fits, 3 back-tests, ${reps} replications, pool sized to the work): ${whole.wall.toFixed(2)} s wall, ${whole.cpu.toFixed(2)} s CPU`);
} finally {
  rmSync(dir, { recursive: true, force: true });
}
