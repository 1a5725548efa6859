/**
 * Reading a daily panel: N = 100 assets over T = 10,000 weekdays (1,000,100 price rows, the
 * scenario of bench/lib/scenario.ts) from the project database into the returns panel a fit
 * uses (store -> histories -> returns engine: daily periods, total returns, excess over the
 * risk-free, the factors on the same days), in this process, beside pandas reading the same
 * rows from the CSV file (read_csv) and building the returns (pivot to one column per asset,
 * P_t / P_t-1), in its own process with pandas already imported (bench/numpy/read_panel.py).
 * CPU seconds, best of the runs; the first load after an import also stores the packed
 * series (src-main/store/packs.ts), later loads read them; a load in a new process (code not
 * yet compiled, bench/lib/load-panel-once.ts) shows what a command meets. Goal: within 2x of pandas.
 *
 *   npm run bench -- daily            options: --reps N (default 5)
 */
import { spawnSync } from 'node:child_process';
import { mkdirSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { buildPanel } from '../shared/returns/index.js';
import { loadPanelInput } from '../src-main/data/panel.js';
import { Store } from '../src-main/store/store.js';
import { havePandas, machineLine, out, PYTHON, ROOT, table, timeHere } from './lib/anchor.js';
import { dailyPanelSpec, dailyScenario } from './lib/scenario.js';

const reps = Number(process.argv[process.argv.indexOf('--reps') + 1]) || 5;
const dir = path.join(tmpdir(), 'deflator-bench-scenarios', 'daily-100x10000');
mkdirSync(dir, { recursive: true });
const s = await dailyScenario(dir, 100, 10000);
out(`Daily panel read: N = 100, T = 10,000 weekdays, 1,000,100 price rows (${s.prices}); ${machineLine()}`);
const spec = dailyPanelSpec(s.factorNames);
const store = new Store(s.db, { mustExist: true });
store.db.prepare('DELETE FROM subject_pack').run(); // as after an import
let shape = '';
const load = () => {
  const input = loadPanelInput(store, spec);
  const panel = buildPanel(input);
  shape = `${panel.returns.length} x ${panel.periods.length}`;
};
const first = timeHere(load);
let best = { wall: Infinity, cpu: Infinity };
for (let r = 0; r < reps; r++) {
  const t = timeHere(load);
  if (t.cpu < best.cpu) best = t;
}
store.close();
// the same load as the first thing a new process does (code not yet compiled), best of runs
let fresh = { wall: Infinity, cpu: Infinity };
for (let r = 0; r < Math.min(reps, 3); r++) {
  const c = spawnSync(process.execPath, ['--import', 'tsx', path.join(ROOT, 'bench/lib/load-panel-once.ts'), s.db, s.factorNames.join(',')], { encoding: 'utf8', cwd: ROOT });
  if (c.status !== 0) throw new Error(`the load in a new process failed: ${c.stderr}`);
  const t = JSON.parse(c.stdout) as { wall: number; cpu: number };
  if (t.cpu < fresh.cpu) fresh = t;
}
const rows: string[][] = [
  ['deflator, first load after an import (reads the rows, stores the packs)', `${first.cpu.toFixed(3)} s`, `${first.wall.toFixed(3)} s`],
  ['deflator, later loads (packed series), best of runs', `${best.cpu.toFixed(3)} s`, `${best.wall.toFixed(3)} s`],
  ['deflator, a load in a new process (packed series, code not yet compiled), best of runs', `${fresh.cpu.toFixed(3)} s`, `${fresh.wall.toFixed(3)} s`],
];
if (havePandas()) {
  const r = spawnSync(PYTHON, [path.join(ROOT, 'bench/numpy/read_panel.py'), s.prices, String(reps)], { encoding: 'utf8' });
  if (r.status !== 0) throw new Error(`pandas failed: ${r.stderr}`);
  const pd = JSON.parse(r.stdout) as { pandas: string; readCpu: number; readWall: number; returnsCpu: number; returnsWall: number };
  rows.push([`pandas ${pd.pandas} read_csv of the same rows`, `${pd.readCpu.toFixed(3)} s`, `${pd.readWall.toFixed(3)} s`]);
  rows.push(['pandas read_csv + pivot + returns', `${(pd.readCpu + pd.returnsCpu).toFixed(3)} s`, `${(pd.readWall + pd.returnsWall).toFixed(3)} s`]);
  table(['panel of ' + shape + ' (assets x days)', 'CPU', 'wall'], rows);
  out(`deflator (packed) / pandas read_csv: ${(best.cpu / pd.readCpu).toFixed(2)}x CPU; / pandas read + returns: ${(best.cpu / (pd.readCpu + pd.returnsCpu)).toFixed(2)}x CPU (goal: within 2x)`);
  out(`in a new process / pandas read_csv: ${(fresh.cpu / pd.readCpu).toFixed(2)}x CPU; / pandas read + returns: ${(fresh.cpu / (pd.readCpu + pd.returnsCpu)).toFixed(2)}x CPU`);
} else {
  table(['panel of ' + shape + ' (assets x days)', 'CPU', 'wall'], rows);
  out('anchor: pandas skipped (Debian python3-pandas not installed)');
}
