// Builds the seeded synthetic 100-asset database for the browser benchmark (through the
// ordinary CLI import), then runs `deflator serve` on it. Invented, seeded data: the
// benchmark times drawing, the values checked on screen come from the engine's reply.
//   node test/e2e/bench-server.mjs <folder> <port> [<key file>]
import { spawn, spawnSync } from 'node:child_process';
import { mkdirSync, rmSync, writeFileSync } from 'node:fs';
import path from 'node:path';

const [dir = 'test-output/e2e/bench', port = '5818', keyFile] = process.argv.slice(2);
const cli = path.resolve('dist/cli.js');
const N = 100;
const T = 240;

/** mulberry32: a small seeded generator, so every run has the same data. */
function rng(seed) {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}
const u = rng(20260107);
const normal = () => Math.sqrt(-2 * Math.log(u() + 1e-12)) * Math.cos(2 * Math.PI * u());

function monthEnd(k) {
  const y = 2001 + Math.floor(k / 12);
  const m = k % 12;
  const d = new Date(Date.UTC(y, m + 1, 0));
  return d.toISOString().slice(0, 10);
}

rmSync(dir, { recursive: true, force: true });
mkdirSync(dir, { recursive: true });
const dates = Array.from({ length: T + 1 }, (_, k) => monthEnd(k));
const f1 = dates.map(() => 0.005 + 0.04 * normal());
const f2 = dates.map(() => 0.002 + 0.03 * normal());
const rf = dates.map(() => 0.002);
const prices = ['date,asset,price'];
for (let i = 0; i < N; i++) {
  const b1 = 0.5 + u();
  const b2 = -0.5 + u();
  let p = 20 + 80 * u();
  const name = `bench-${String(i + 1).padStart(3, '0')}`;
  prices.push(`${dates[0]},${name},${p.toFixed(4)}`);
  for (let t = 1; t <= T; t++) {
    p *= 1 + rf[t] + b1 * f1[t] + b2 * f2[t] + 0.05 * normal();
    prices.push(`${dates[t]},${name},${p.toFixed(4)}`);
  }
}
writeFileSync(path.join(dir, 'prices.csv'), `${prices.join('\n')}\n`);
writeFileSync(path.join(dir, 'factors.csv'), `date,f1,f2\n${dates.slice(1).map((d, k) => `${d},${f1[k + 1].toFixed(6)},${f2[k + 1].toFixed(6)}`).join('\n')}\n`);
writeFileSync(path.join(dir, 'rf.csv'), `date,rf\n${dates.map((d, k) => `${d},${rf[k]}`).join('\n')}\n`);

const db = path.join(dir, 'bench.db');
const run = (args) => {
  const r = spawnSync(process.execPath, [cli, ...args, '--db', db], { stdio: 'inherit' });
  if (r.status !== 0) process.exit(r.status ?? 1);
};
run(['import', 'prices', path.join(dir, 'prices.csv')]);
run(['import', 'series', path.join(dir, 'factors.csv'), '--kind', 'factor']);
run(['import', 'series', path.join(dir, 'rf.csv'), '--kind', 'riskfree', '--rf-form', 'rate']);

const child = spawn(process.execPath, [cli, 'serve', '--db', db, '--port', port, ...(keyFile ? ['--key-file', keyFile] : [])], { stdio: 'inherit' });
for (const sig of ['SIGINT', 'SIGTERM']) process.on(sig, () => child.kill(sig));
child.on('exit', (code) => process.exit(code ?? 0));
