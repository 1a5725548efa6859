/**
 * What every benchmark shares: running the numpy anchor the way the README states it
 * (`env -u OPENBLAS_CORETYPE -u OPENBLAS_L2_SIZE OPENBLAS_NUM_THREADS=1 /usr/bin/python3 ...`,
 * so OpenBLAS picks its own kernels for this CPU, on one thread), timing whole processes
 * (wall and CPU seconds from /usr/bin/time), interleaving the contenders run by run so that
 * a busy machine slows them alike, and printing figures side by side with their spread.
 */
import { spawnSync, type SpawnSyncReturns } from 'node:child_process';
import { existsSync } from 'node:fs';
import { availableParallelism } from 'node:os';
import path from 'node:path';

export const ROOT = path.resolve(import.meta.dirname, '..', '..');
export const PYTHON = '/usr/bin/python3';

export const out = (s = ''): void => {
  process.stdout.write(`${s}\n`);
};

/** The command line that runs a Python anchor (documented in README, Performance). */
export function numpyCommand(script: string, args: string[]): { cmd: string; args: string[] } {
  return { cmd: 'env', args: ['-u', 'OPENBLAS_CORETYPE', '-u', 'OPENBLAS_L2_SIZE', 'OPENBLAS_NUM_THREADS=1', PYTHON, script, ...args] };
}

export function haveNumpy(): boolean {
  const r = spawnSync(PYTHON, ['-c', 'import numpy'], { encoding: 'utf8' });
  return !r.error && r.status === 0;
}

export function havePandas(): boolean {
  const r = spawnSync(PYTHON, ['-c', 'import pandas'], { encoding: 'utf8' });
  return !r.error && r.status === 0;
}

/** numpy's version and the BLAS it ran (bench/numpy/blas_info.py), as one line. */
export function blasLine(): string {
  const c = numpyCommand(path.join(ROOT, 'bench/numpy/blas_info.py'), []);
  const r = spawnSync(c.cmd, c.args, { encoding: 'utf8' });
  if (r.status !== 0) return `numpy: BLAS unknown (${(r.stderr || '').trim().split('\n').pop()})`;
  const j = JSON.parse(r.stdout) as { numpy: string; libraries: string[]; openblas?: { core?: string; config?: string; threads?: number } };
  return j.openblas?.config
    ? `numpy ${j.numpy}, ${j.openblas.config.split(' ').slice(0, 2).join(' ')}, core ${j.openblas.core}, ${j.openblas.threads} thread(s) (OPENBLAS_CORETYPE and OPENBLAS_L2_SIZE unset)`
    : `numpy ${j.numpy}, BLAS ${j.libraries.map((l) => path.basename(l)).join(', ')}`;
}

export interface Timed {
  wall: number;
  cpu: number;
}

/**
 * Runs a whole process and times it: wall and CPU (user + system) seconds, to the
 * millisecond by bash's `time` (TIMEFORMAT %3R %3U %3S: the wall clock around the command
 * alone, and the command's own rusage), else to the hundredth by /usr/bin/time, else the
 * wall clock around the spawn only (no CPU figure).
 */
export function timeProcess(cmd: string, args: string[], opts: { cwd?: string; env?: NodeJS.ProcessEnv; check?: (r: SpawnSyncReturns<string>) => void } = {}): Timed & { stdout: string } {
  const how = existsSync('/bin/bash') ? 'bash' : existsSync('/usr/bin/time') ? 'time' : 'none';
  const spawnOpts = { cwd: opts.cwd ?? ROOT, encoding: 'utf8' as const, maxBuffer: 1 << 28, env: opts.env ?? process.env };
  const t0 = performance.now();
  const r =
    how === 'bash'
      ? spawnSync('/bin/bash', ['-c', 'TIMEFORMAT="@@time %3R %3U %3S"; time "$@"', 'bash', cmd, ...args], spawnOpts)
      : how === 'time'
        ? spawnSync('/usr/bin/time', ['-f', '@@time %e %U %S', cmd, ...args], spawnOpts)
        : spawnSync(cmd, args, spawnOpts);
  const wall = (performance.now() - t0) / 1000;
  if (r.status !== 0) throw new Error(`${cmd} ${args.join(' ')} exited with ${r.status}: ${(r.stderr ?? '').slice(-800)}`);
  opts.check?.(r);
  const m = /@@time ([\d.]+) ([\d.]+) ([\d.]+)/.exec(r.stderr ?? '');
  return m ? { wall: Number(m[1]), cpu: Number(m[2]) + Number(m[3]), stdout: r.stdout } : { wall, cpu: NaN, stdout: r.stdout };
}

export interface Spread {
  median: number;
  min: number;
  max: number;
  n: number;
}

export function spread(xs: number[]): Spread {
  const s = [...xs].sort((a, b) => a - b);
  const n = s.length;
  return { median: n % 2 ? s[(n - 1) / 2] : (s[n / 2 - 1] + s[n / 2]) / 2, min: s[0], max: s[n - 1], n };
}

/** Runs each contender once per round, `rounds` times (after one warm-up round): wall and CPU spreads. */
export function interleave(contenders: { label: string; run: () => Timed }[], rounds: number): Map<string, { wall: Spread; cpu: Spread }> {
  for (const c of contenders) c.run();
  const walls = new Map(contenders.map((c) => [c.label, [] as number[]]));
  const cpus = new Map(contenders.map((c) => [c.label, [] as number[]]));
  for (let r = 0; r < rounds; r++)
    for (const c of contenders) {
      const t = c.run();
      walls.get(c.label)!.push(t.wall);
      cpus.get(c.label)!.push(t.cpu);
    }
  return new Map(contenders.map((c) => [c.label, { wall: spread(walls.get(c.label)!), cpu: spread(cpus.get(c.label)!) }]));
}

/** "0.412 s (0.398-0.520)" */
export function sec(s: Spread, digits = 3): string {
  return `${s.median.toFixed(digits)} s (${s.min.toFixed(digits)}-${s.max.toFixed(digits)})`;
}

export function ms(s: Spread, digits = 1): string {
  return `${(s.median * 1000).toFixed(digits)} ms (${(s.min * 1000).toFixed(digits)}-${(s.max * 1000).toFixed(digits)})`;
}

/** Prints a Markdown table (the README copies them). */
export function table(header: string[], rows: string[][]): void {
  out(`| ${header.join(' | ')} |`);
  out(`| ${header.map(() => '---').join(' | ')} |`);
  for (const r of rows) out(`| ${r.join(' | ')} |`);
}

/** Machine line for the figures' context. */
export function machineLine(): string {
  const load = spawnSync('cat', ['/proc/loadavg'], { encoding: 'utf8' }).stdout.trim().split(' ').slice(0, 3).join(' ');
  return `node ${process.version}, ${availableParallelism()} cores, load average ${load}`;
}

/** CPU seconds of this process so far (user + system). */
export function cpuNow(): number {
  const u = process.cpuUsage();
  return (u.user + u.system) / 1e6;
}

/** Times fn in this process: wall and CPU seconds. */
export function timeHere(fn: () => void): Timed {
  const c0 = cpuNow();
  const t0 = performance.now();
  fn();
  return { wall: (performance.now() - t0) / 1000, cpu: cpuNow() - c0 };
}
