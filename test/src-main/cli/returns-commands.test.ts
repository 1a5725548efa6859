/**
 * Assets imported as returns through the CLI (`node dist/cli.js`, the bundle vitest's
 * global setup builds): `deflator demo --set returns` (the README section "Your data as
 * returns"), `import returns` with its options, `info`, `returns` at a lower frequency,
 * momentum sorts on returns and the sorts that need prices refused naming the asset,
 * `backtest` and `compare` on the return portfolios, and a run made stale by a corrected
 * return file. Expected compounded returns are worked by hand: R_quarter = prod(1 + r).
 */
import { spawnSync } from 'node:child_process';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { tempDir, write } from '../import/helpers.js';

const root = path.resolve(import.meta.dirname, '../../..');
const cli = path.join(root, 'dist', 'cli.js');

function run(args: string[], cwd = root) {
  const r = spawnSync(process.execPath, [cli, ...args], { cwd, encoding: 'utf8', timeout: 240_000 });
  return { code: r.status, stdout: r.stdout, stderr: r.stderr };
}

describe('assets imported as returns, through the CLI', () => {
  it('deflator demo --set returns imports the return portfolios, factors and bill rate, fits and records the run', () => {
    const dir = tempDir();
    const db = path.join(dir, 'returns.db');
    const r = run(['demo', '--set', 'returns', '--db', db, '--json']);
    expect(r.stderr).toBe('');
    expect(r.code).toBe(0);
    const j = JSON.parse(r.stdout) as {
      info: { assets: { name: string; source: string; form: string; units: string; missing: number; first: string }[]; series: { name: string; kind: string }[] };
      fit: { run: number; sample: { N: number; T: number } };
      caution: string;
    };
    expect(j.info.assets).toHaveLength(12);
    expect(j.info.assets.every((a) => a.source === 'returns' && a.form === 'net' && a.units === 'percent')).toBe(true);
    expect(j.info.assets.find((a) => a.name === 'small-t1')?.missing).toBe(2);
    expect(j.info.assets.find((a) => a.name === 'large-t4')?.first).toBe('1990-07-31');
    expect(j.info.series.map((s) => `${s.name}:${s.kind}`).sort()).toEqual(['beacon:factor', 'bill_rate:riskfree', 'keel:factor', 'tideline:factor']);
    expect(j.fit.run).toBe(1);
    expect(j.fit.sample).toMatchObject({ N: 12, T: 312 });
    expect(j.caution).toMatch(/not investment advice/);

    const info = run(['info', '--db', db]);
    expect(info.stdout).toMatch(/small-t1\s+1990-01-31\s+2024-12-31\s+418\s+monthly\s+1\s+0\s+0\s+2\s+net returns \(percent\)/);

    const bt = run(['backtest', path.join(root, 'sample-data/specs/returns-backtest-rolling.json'), '--db', db, '--json']);
    expect(bt.stderr).toBe('');
    expect(bt.code).toBe(0);
    expect((JSON.parse(bt.stdout) as { windows: number }).windows).toBe(312 - 120);
    const cmp = run(['compare', path.join(root, 'sample-data/specs/returns-compare.json'), '--db', db, '--json']);
    expect(cmp.stderr).toBe('');
    expect(cmp.code).toBe(0);
    const runs = run(['runs', '--db', db, '--json']);
    expect((JSON.parse(runs.stdout) as unknown[]).length).toBe(3);

    // momentum sorts work on returns; a price sort is refused, naming the assets
    const mom = run(['portfolio', 'build', '--db', db, '--sort', 'momentum', '--groups', '3', '--name', 'mom', '--json']);
    expect(mom.stderr).toBe('');
    expect(mom.code).toBe(0);
    expect((JSON.parse(mom.stdout) as { series: unknown[] }).series).toHaveLength(3);
    const size = run(['portfolio', 'build', '--db', db, '--sort', 'size', '--name', 'sz']);
    expect(size.code).toBe(1);
    expect(size.stderr).toMatch(/a size sort needs prices and shares outstanding, and "large-t1" \(net returns \(percent\)\), .* were imported as returns/);
  }, 300_000);

  it('import returns: options, the report, returns at a lower frequency, a corrected file making a run stale', () => {
    const dir = tempDir();
    const db = path.join(dir, 'r.db');
    const file = write(dir, 'ports.csv', 'date;north;south\n2021-01;1,00;-99,99\n2021-02;2,00;0,50\n2021-03;-1,00;0,25\n2021-04;0,50;NA\n2021-05;0,10;0,30\n2021-06;0,20;0,40\n');
    const args = ['import', 'returns', file, '--db', db, '--date-format', 'YYYY-MM', '--units', 'percent', '--delimiter', 'semicolon', '--decimal', 'comma', '--missing', '-99.99,NA'];
    const r = run([...args, '--json']);
    expect(r.stderr).toBe('');
    expect(r.code).toBe(0);
    const rep = JSON.parse(r.stdout) as { kind: string; subjects: string[]; frequency: string; rowsStored: number; warnings: { kind: string; message: string }[] };
    expect(rep).toMatchObject({ kind: 'returns', subjects: ['north', 'south'], frequency: 'monthly', rowsStored: 11 });
    expect(rep.warnings.find((w) => w.kind === 'missing')?.message).toMatch(/south: 1 period without a return .*2021-04-30/);
    const text = run(args);
    expect(text.stdout).toMatch(/already imported/);

    const q = run(['returns', '--db', db, '--frequency', 'quarterly', '--kind', 'net', '--json']);
    const t = JSON.parse(q.stdout) as { periods: string[]; series: Record<string, (number | null)[]> };
    expect(t.periods).toEqual(['2021-03-31', '2021-06-30']);
    // by hand: Q1 1.01 * 1.02 * 0.99 - 1; south Q1 starts with a missing January (no return), Q2 has a gap (none)
    expect(Math.abs((t.series.north[0] as number) - (1.01 * 1.02 * 0.99 - 1))).toBeLessThan(1e-15);
    expect(Math.abs((t.series.north[1] as number) - (1.005 * 1.001 * 1.002 - 1))).toBeLessThan(1e-15);
    expect(t.series.south).toEqual([null, null]);

    // a spec on them, recorded; a corrected file (--replace) makes the run stale
    write(dir, 'f.csv', 'date,gust\n2021-01,0.5\n2021-02,1.5\n2021-03,-0.5\n2021-04,0.2\n2021-05,0.4\n2021-06,0.1\n');
    expect(run(['import', 'series', path.join(dir, 'f.csv'), '--db', db, '--kind', 'factor', '--units', 'percent', '--date-format', 'YYYY-MM']).code).toBe(0);
    const spec = write(dir, 'spec.json', JSON.stringify({ frequency: 'monthly', assets: ['north'], returns: 'excess', model: { kind: 'linear', factors: ['gust'] }, estimator: { method: 'time-series' } }));
    const noRf = run(['fit', spec, '--db', db]);
    expect(noRf.code).toBe(1);
    expect(noRf.stderr).toMatch(/spec\.riskfree: excess returns of "north" need a risk-free series, and the spec names none/);
    write(dir, 'bill.csv', 'date,bill\n2021-01,0.1\n2021-02,0.1\n2021-03,0.1\n2021-04,0.1\n2021-05,0.1\n2021-06,0.1\n');
    expect(run(['import', 'series', path.join(dir, 'bill.csv'), '--db', db, '--kind', 'riskfree', '--units', 'percent', '--date-format', 'YYYY-MM']).code).toBe(0);
    const withRf = write(dir, 'spec-rf.json', JSON.stringify({ frequency: 'monthly', assets: ['north'], returns: 'excess', riskfree: 'bill', model: { kind: 'linear', factors: ['gust'] }, estimator: { method: 'time-series' } }));
    const fitted = run(['fit', withRf, '--db', db]);
    expect(fitted.stderr).toBe('');
    expect(fitted.stdout).toMatch(/Recorded as run 1/);
    const stale = () => (JSON.parse(run(['runs', '--db', db, '--json']).stdout) as { id: number; stale: boolean }[])[0].stale;
    expect(stale()).toBe(false);
    const corrected = write(dir, 'ports2.csv', 'date;north\n2021-01;1,00\n2021-02;2,50\n2021-03;-1,00\n2021-04;0,50\n2021-05;0,10\n2021-06;0,20\n');
    const fixed = run(['import', 'returns', corrected, '--db', db, '--date-format', 'YYYY-MM', '--units', 'percent', '--delimiter', 'semicolon', '--decimal', 'comma', '--replace']);
    expect(fixed.code).toBe(0);
    expect(fixed.stdout).toMatch(/replaced 6 stored rows from import 1 \(ports\.csv\)/);
    expect(stale(), 'the run read north, whose February return changed').toBe(true);
  });

  it('excess returns: fitted without a risk-free series; info says excess', () => {
    const dir = tempDir();
    const db = path.join(dir, 'x.db');
    const months = Array.from({ length: 36 }, (_, t) => `${2010 + Math.floor(t / 12)}-${String((t % 12) + 1).padStart(2, '0')}`);
    const wave = (t: number, k: number) => (Math.sin(0.7 * t + k) * 2 + 0.3 * k).toFixed(2);
    write(dir, 'x.csv', `date,ex1,ex2,ex3\n${months.map((m, t) => `${m},${wave(t, 1)},${wave(t, 2)},${(Number(wave(t, 3)) + Math.cos(1.3 * t)).toFixed(2)}`).join('\n')}\n`);
    write(dir, 'f.csv', `date,gust\n${months.map((m, t) => `${m},${(Math.sin(0.7 * t + 1.5) * 2).toFixed(2)}`).join('\n')}\n`);
    expect(run(['import', 'returns', path.join(dir, 'x.csv'), '--db', db, '--date-format', 'YYYY-MM', '--units', 'percent', '--excess']).code).toBe(0);
    expect(run(['import', 'series', path.join(dir, 'f.csv'), '--db', db, '--kind', 'factor', '--units', 'percent', '--date-format', 'YYYY-MM']).code).toBe(0);
    expect(run(['info', '--db', db]).stdout).toMatch(/ex1 .*net returns \(percent, excess\)/);
    const spec = write(dir, 'spec.json', JSON.stringify({ frequency: 'monthly', assets: 'all', returns: 'excess', model: { kind: 'linear', factors: ['gust'] }, estimator: { method: 'time-series' } }));
    const f = run(['fit', spec, '--db', db, '--json']);
    expect(f.stderr).toBe('');
    expect(f.code).toBe(0);
    expect((JSON.parse(f.stdout) as { sample: { T: number; N: number } }).sample).toMatchObject({ T: 36, N: 3 });
    const net = run(['returns', '--db', db, '--frequency', 'monthly', '--kind', 'net']);
    expect(net.stdout).toMatch(/dropped ex1: holds excess returns: net returns need R = R\^e \+ R\^f, so name a risk-free series/);
  });
});
