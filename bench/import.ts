/**
 * Import throughput: a 5,000,000-row long price file (2,000 assets x 2,500 weekdays),
 * imported by `deflator import prices` (every row validated) in a child process whose
 * peak memory is measured, next to the sqlite3 shell's `.import --csv` of the same file
 * into a plain table. Targets: within 2x of the sqlite3 shell; peak RSS under 400 MB.
 * Each side runs --repeat times (default 2) on a fresh database; the best time counts (the
 * machine is shared, so the fastest run is the least disturbed one).
 * Options: --assets N --days N (defaults 2000 x 2500), --repeat N, --keep (leave the temp folder).
 */
import { spawnSync } from 'node:child_process';
import { createWriteStream, existsSync, mkdtempSync, rmSync, statSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';

const arg = (name: string, fallback: number) => {
  const i = process.argv.indexOf(`--${name}`);
  return i > 0 ? Number(process.argv[i + 1]) : fallback;
};
const ASSETS = arg('assets', 2000);
const DAYS = arg('days', 2500);
const REPEAT = Math.max(1, arg('repeat', 2));
const root = path.resolve(import.meta.dirname, '..');
const cli = path.join(root, 'dist', 'cli.js');
const dir = mkdtempSync(path.join(tmpdir(), 'deflator-bench-'));
const csv = path.join(dir, 'prices.csv');

/** Weekdays from 2010-01-04 on. */
function weekdays(n: number): string[] {
  const out: string[] = [];
  const d = new Date(Date.UTC(2010, 0, 4));
  while (out.length < n) {
    const wd = d.getUTCDay();
    if (wd !== 0 && wd !== 6) out.push(d.toISOString().slice(0, 10));
    d.setUTCDate(d.getUTCDate() + 1);
  }
  return out;
}

async function generate(): Promise<void> {
  let seed = 12345;
  const rand = () => {
    seed = (Math.imul(seed, 1103515245) + 12345) >>> 0;
    return seed / 4294967296;
  };
  const dates = weekdays(DAYS);
  const names = Array.from({ length: ASSETS }, (_, i) => `asset${String(i).padStart(4, '0')}`);
  const price = names.map(() => 20 + 80 * rand());
  const out = createWriteStream(csv);
  const write = (s: string) => (out.write(s) ? Promise.resolve() : new Promise<void>((r) => out.once('drain', () => r())));
  await write('date,asset,price,dividend\n');
  for (let t = 0; t < dates.length; t++) {
    let block = '';
    for (let i = 0; i < ASSETS; i++) {
      price[i] *= 1 + 0.0003 + 0.015 * (rand() + rand() + rand() - 1.5);
      const p = price[i].toFixed(4);
      const div = i % 3 === 0 && t % 63 === 62 ? (price[i] * 0.005).toFixed(4) : '';
      block += `${dates[t]},${names[i]},${p},${div}\n`;
    }
    await write(block);
  }
  await new Promise<void>((r) => out.end(() => r()));
}

function timed(cmd: string, args: string[], input?: string): { seconds: number; maxRssMb: number | null; stdout: string; stderr: string; status: number | null } {
  const useTime = existsSync('/usr/bin/time');
  const started = performance.now();
  const r = useTime
    ? spawnSync('/usr/bin/time', ['-v', cmd, ...args], { input, encoding: 'utf8', maxBuffer: 1 << 26 })
    : spawnSync(cmd, args, { input, encoding: 'utf8', maxBuffer: 1 << 26 });
  const seconds = (performance.now() - started) / 1000;
  const m = /Maximum resident set size \(kbytes\): (\d+)/.exec(r.stderr ?? '');
  return { seconds, maxRssMb: m ? Number(m[1]) / 1024 : null, stdout: r.stdout ?? '', stderr: r.stderr ?? '', status: r.status };
}

const rows = ASSETS * DAYS;
try {
  const t0 = performance.now();
  await generate();
  const mb = statSync(csv).size / 1e6;
  process.stdout.write(`generated ${rows.toLocaleString('en')} rows (${ASSETS} assets x ${DAYS} days), ${mb.toFixed(0)} MB, in ${((performance.now() - t0) / 1000).toFixed(1)} s\n`);

  const best = (runs: ReturnType<typeof timed>[]) => runs.reduce((a, b) => (b.seconds < a.seconds ? b : a));
  const oursRuns: ReturnType<typeof timed>[] = [];
  const sqliteRuns: ReturnType<typeof timed>[] = [];
  const haveSqlite = existsSync('/usr/bin/sqlite3') || spawnSync('sqlite3', ['-version']).status === 0;
  let report: { rowsStored: number; warnings: unknown[] } = { rowsStored: 0, warnings: [] };
  for (let k = 0; k < REPEAT; k++) {
    const db = path.join(dir, `deflator-${k}.db`);
    const run = timed(process.execPath, [cli, 'import', 'prices', csv, '--db', db, '--json']);
    if (run.status !== 0) throw new Error(`deflator import failed:\n${run.stderr}`);
    report = JSON.parse(run.stdout) as typeof report;
    if (report.rowsStored !== rows) throw new Error(`stored ${report.rowsStored} rows, expected ${rows}`);
    oursRuns.push(run);
    for (const suffix of ['', '-wal', '-shm']) rmSync(db + suffix, { force: true });
    if (haveSqlite) {
      const plain = path.join(dir, `plain-${k}.db`);
      const script = `PRAGMA journal_mode=WAL;\nCREATE TABLE obs(date TEXT, asset TEXT, price REAL, dividend REAL);\n.import --csv --skip 1 ${csv} obs\nSELECT count(*) FROM obs;\n`;
      const r = timed('sqlite3', [plain], script);
      if (r.status !== 0) throw new Error(`sqlite3 failed:\n${r.stderr}`);
      sqliteRuns.push(r);
      for (const suffix of ['', '-wal', '-shm']) rmSync(plain + suffix, { force: true });
    }
  }
  const ours = best(oursRuns);
  const sqlite = sqliteRuns.length ? best(sqliteRuns) : null;
  process.stdout.write(`runs (s): deflator ${oursRuns.map((r) => r.seconds.toFixed(1)).join(', ')}${sqlite ? `; sqlite3 ${sqliteRuns.map((r) => r.seconds.toFixed(1)).join(', ')}` : ''}\n`);
  const rate = (s: number) => `${Math.round(rows / s).toLocaleString('en')} rows/s`;
  const rss = (r: { maxRssMb: number | null }) => (r.maxRssMb === null ? 'n/a' : `${r.maxRssMb.toFixed(0)} MB`);
  process.stdout.write(`\n| import of ${rows.toLocaleString('en')} rows | seconds | rows/s | peak RSS |\n| --- | --- | --- | --- |\n`);
  process.stdout.write(`| deflator import prices (validated, indexed, checks) | ${ours.seconds.toFixed(1)} | ${rate(ours.seconds)} | ${rss(ours)} |\n`);
  if (sqlite) process.stdout.write(`| sqlite3 shell .import --csv (plain table) | ${sqlite.seconds.toFixed(1)} | ${rate(sqlite.seconds)} | ${rss(sqlite)} |\n`);
  if (sqlite) process.stdout.write(`\nratio deflator / sqlite3 = ${(ours.seconds / sqlite.seconds).toFixed(2)} (target <= 2.00); peak RSS target < 400 MB; warnings: ${report.warnings.length}\n`);
} finally {
  if (!process.argv.includes('--keep')) rmSync(dir, { recursive: true, force: true });
  else process.stdout.write(`kept ${dir}\n`);
}
