/**
 * Whole-process latency of the demo fit, as a user feels it: `deflator fit
 * sample-data/specs/linear-second.json` on the demo database (module loading, reading the
 * panel from the store, the second-stage fit, the run record, the report), beside
 * `node -e 0` (the floor any Node program pays) and bench/numpy/demo_fit.py, a numpy script
 * doing the same fit from the same CSV files (Python start, numpy import, CSV reading,
 * returns, the fit). Also `npx deflator` once per round, to show what npx adds.
 * Interleaved rounds; medians with min-max. Goal: deflator no slower than the numpy script.
 *
 *   npm run bench -- startup          options: --rounds N (default 9)
 */
import { copyFileSync, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { buildDemo } from '../src-main/data/demo.js';
import { blasLine, haveNumpy, interleave, machineLine, numpyCommand, out, ROOT, sec, table, timeProcess } from './lib/anchor.js';

const rounds = Number(process.argv[process.argv.indexOf('--rounds') + 1]) || 9;
const dir = mkdtempSync(path.join(tmpdir(), 'deflator-bench-startup-'));
try {
  const db = path.join(dir, 'demo.db');
  await buildDemo(db);
  const spare = path.join(dir, 'demo-npx.db');
  copyFileSync(db, spare);
  const spec = path.join(ROOT, 'sample-data/specs/linear-second.json');
  const bin = path.join(ROOT, 'bin/deflator.js');
  const np = numpyCommand(path.join(ROOT, 'bench/numpy/demo_fit.py'), []);
  const contenders = [
    { label: 'node -e 0', run: () => timeProcess(process.execPath, ['-e', '0']) },
    { label: 'deflator fit (bin/deflator.js, records the run)', run: () => timeProcess(process.execPath, [bin, 'fit', spec, '--db', db]) },
    { label: 'deflator fit --no-record', run: () => timeProcess(process.execPath, [bin, 'fit', spec, '--db', db, '--no-record']) },
    { label: 'npx deflator fit', run: () => timeProcess('npx', ['--no-install', 'deflator', 'fit', spec, '--db', spare]) },
    ...(haveNumpy() ? [{ label: 'numpy script (bench/numpy/demo_fit.py)', run: () => timeProcess(np.cmd, np.args) }] : []),
  ];
  out(`Whole process, demo fit (30 assets, 288 months, second-stage GMM, 3 factors): ${rounds} interleaved rounds after a warm-up; ${machineLine()}`);
  if (haveNumpy()) out(`anchor: ${blasLine()}`);
  else out('anchor: numpy script skipped (Debian python3-numpy not installed)');
  const res = interleave(contenders, rounds);
  table(
    ['command', 'wall, median (min-max)', 'CPU, median (min-max)'],
    [...res].map(([label, r]) => [label, sec(r.wall), sec(r.cpu)]),
  );
  const d = res.get('deflator fit (bin/deflator.js, records the run)')!;
  const n = res.get('numpy script (bench/numpy/demo_fit.py)');
  const floor = res.get('node -e 0')!;
  out(`deflator above node -e 0: ${((d.wall.median - floor.wall.median) * 1000).toFixed(0)} ms wall, ${((d.cpu.median - floor.cpu.median) * 1000).toFixed(0)} ms CPU`);
  if (n) out(`deflator / numpy script: ${(d.wall.median / n.wall.median).toFixed(2)}x wall, ${(d.cpu.median / n.cpu.median).toFixed(2)}x CPU (goal: at most 1x)`);
} finally {
  rmSync(dir, { recursive: true, force: true });
}
