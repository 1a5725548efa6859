/**
 * The data commands end to end: `node dist/cli.js` (the bundle vitest's global setup
 * builds) on a temp database with files written here by hand. Expected returns are
 * worked by hand from R_t = (P_t + D_t) / P_{t-1} (Campbell, Lo and MacKinlay 1997,
 * sec. 1.4) and R^e = R - R^f with R^f = B_t / B_{t-1} for an account level.
 */
import { spawnSync } from 'node:child_process';
import { existsSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { Store } from '../../../src-main/store/store.js';
import { tempDir, write } from '../import/helpers.js';

const root = path.resolve(import.meta.dirname, '../../..');
const cli = path.join(root, 'dist', 'cli.js');

function run(args: string[], cwd = root) {
  const r = spawnSync(process.execPath, [cli, ...args], { cwd, encoding: 'utf8' });
  return { code: r.status, stdout: r.stdout, stderr: r.stderr };
}

describe('deflator import / info / returns', () => {
  it('imports prices and a risk-free account, reports, refuses bad files, computes returns', () => {
    const dir = tempDir();
    const db = path.join(dir, 'cli.db');
    const prices = write(dir, 'prices.csv', 'date,asset,price,dividend\n2021-01-29,kelp,10,\n2021-02-26,kelp,11,0.5\n2021-03-31,kelp,12.1,\n2021-01-29,tin,40,\n2021-02-26,tin,38,\n2021-03-31,tin,39.9,\n');
    const account = write(dir, 'account.csv', 'date,acct\n2021-01-29,100\n2021-02-26,100.5\n2021-03-31,101\n');

    const first = run(['import', 'prices', prices, '--db', db]);
    expect(first.stderr).toBe('');
    expect(first.code).toBe(0);
    expect(first.stdout).toMatch(/imported 6 observations from 6 rows \(2 assets; 2021-01-29 to 2021-03-31, monthly\)/);
    expect(existsSync(db)).toBe(true);

    const again = run(['import', 'prices', prices, '--db', db]);
    expect(again.code).toBe(0);
    expect(again.stdout).toMatch(/already imported \(same SHA-256 [0-9a-f]{12}\.\.\., import #1 at .*\); nothing changed/);

    const series = run(['import', 'series', account, '--db', db, '--kind', 'riskfree', '--rf-form', 'account', '--json']);
    expect(series.code).toBe(0);
    expect(JSON.parse(series.stdout)).toMatchObject({ status: 'imported', kind: 'series', subjects: ['acct'], rowsStored: 3 });

    const store = new Store(db);
    const digest = store.contentDigest();
    store.close();
    const bad = run(['import', 'prices', write(dir, 'bad.csv', 'date,asset,price\n2021-04-30,kelp,12\n2021-05-31,kelp,-1\n'), '--db', db]);
    expect(bad.code).toBe(1);
    expect(bad.stdout).toBe('');
    expect(bad.stderr).toMatch(/^deflator: .*bad\.csv, line 3, column 3 \(price\): price -1 is not positive\n  -> /);
    const after = new Store(db);
    expect(after.contentDigest(), 'a failed CLI import changes nothing').toBe(digest);
    after.close();

    const info = run(['info', '--db', db, '--json']);
    expect(info.code).toBe(0);
    const parsed = JSON.parse(info.stdout) as { assets: { name: string; count: number; first: string; last: string; dividends: number }[]; series: { name: string; rfForm: string }[]; imports: unknown[] };
    expect(parsed.assets.map((a) => [a.name, a.count, a.first, a.last, a.dividends])).toEqual([
      ['kelp', 3, '2021-01-29', '2021-03-31', 1],
      ['tin', 3, '2021-01-29', '2021-03-31', 0],
    ]);
    expect(parsed.series).toMatchObject([{ name: 'acct', rfForm: 'account' }]);
    expect(parsed.imports).toHaveLength(2);
    const text = run(['info', '--db', db]);
    expect(text.stdout).toMatch(/Assets: 2/);
    expect(text.stdout).toMatch(/kelp\s+2021-01-29\s+2021-03-31\s+3\s+monthly/);

    // by hand: kelp (11 + 0.5) / 10 = 1.15, 12.1 / 11 = 1.1; tin 38 / 40 = 0.95, 39.9 / 38 = 1.05
    const net = run(['returns', '--db', db, '--frequency', 'monthly', '--json']);
    expect(net.code).toBe(0);
    const t = JSON.parse(net.stdout) as { frequency: string; kind: string; periods: string[]; series: Record<string, number[]>; sample: { first: string; last: string; T: number } };
    expect(Object.keys(t).slice(0, 5)).toEqual(['frequency', 'kind', 'periods', 'series', 'sample']);
    expect(t).toMatchObject({ frequency: 'monthly', kind: 'net', periods: ['2021-02-26', '2021-03-31'], sample: { first: '2021-02-26', last: '2021-03-31', T: 2 } });
    const want: Record<string, number[]> = { kelp: [0.15, 0.1], tin: [-0.05, 0.05] };
    for (const [a, v] of Object.entries(want)) v.forEach((x, i) => expect(Math.abs(t.series[a][i] - x), `${a}[${i}] got ${t.series[a][i]}, expected ${x}, tolerance 1e-15`).toBeLessThanOrEqual(1e-15));

    // excess over the account: R^f = 100.5 / 100 = 1.005, 101 / 100.5
    const ex = JSON.parse(run(['returns', '--db', db, '--frequency', 'monthly', '--kind', 'excess', '--riskfree', 'acct', '--json']).stdout) as typeof t;
    expect(Math.abs(ex.series.kelp[0] - (1.15 - 1.005))).toBeLessThanOrEqual(1e-15);
    expect(Math.abs(ex.series.tin[1] - (1.05 - 101 / 100.5))).toBeLessThanOrEqual(1e-15);

    // all closes fall in one quarter: no previous quarter-end close, so no quarterly return (docs/methods.md, Returns)
    const quarterly = JSON.parse(run(['returns', '--db', db, '--frequency', 'quarterly', '--kind', 'gross', '--json']).stdout) as typeof t & { sample: { dropped: { asset: string; reason: string }[] } };
    expect(quarterly.periods).toEqual([]);
    expect(quarterly.sample.dropped.map((d) => d.asset)).toEqual(['kelp', 'tin']);

    const csv = run(['returns', '--db', db, '--frequency', 'monthly', '--csv']);
    expect(csv.stdout.split('\r\n')[0]).toBe('period,kelp,tin');
    expect(csv.stdout.split('\r\n')[1]).toMatch(/^2021-02-26,0\.1499999999999999|^2021-02-26,0\.15/);

    const table = run(['returns', '--db', db, '--frequency', 'monthly']);
    expect(table.stdout).toMatch(/net returns, monthly: 2 periods; common sample 2021-02-26 to 2021-03-31, T = 2/);
    expect(table.stdout).toMatch(/2021-03-31\s+0\.100000\s+0\.050000/);
  });

  it('option and usage errors exit non-zero with the cause on stderr', () => {
    const dir = tempDir();
    const db = path.join(dir, 'none.db');
    const missing = run(['info', '--db', db]);
    expect(missing.code).toBe(1);
    expect(missing.stderr).toMatch(/database .*none\.db does not exist/);
    expect(existsSync(db)).toBe(false);
    const noFile = run(['import', 'prices', path.join(dir, 'absent.csv'), '--db', db]);
    expect(noFile.code).toBe(1);
    expect(noFile.stderr).toMatch(/cannot read .*absent\.csv: no such file/);
    const kind = run(['import', 'series', write(dir, 's.csv', 'date,x\n2020-01-31,1\n'), '--db', db, '--kind', 'bond']);
    expect(kind.code).not.toBe(0);
    expect(kind.stderr).toMatch(/--kind: "bond" is not one of factor, riskfree, consumption, other/);
    const excess = run(['returns', '--db', db, '--frequency', 'monthly', '--kind', 'excess']);
    expect(excess.code).toBe(1);
    // (excess returns without --riskfree are fine for assets stored as excess returns, so the data decide: here there are none)
    expect(excess.stderr).toMatch(/no asset histories were given/);
    const freq = run(['returns', '--db', db, '--frequency', 'hourly']);
    expect(freq.stderr).toMatch(/--frequency: "hourly" is not one of daily, weekly, monthly, quarterly, annual/);
  });

  it('deflator demo builds the database from sample-data and says what it holds; rerunning replaces it', () => {
    const dir = tempDir();
    const db = path.join(dir, 'demo.db');
    const r = run(['demo', '--db', db]);
    expect(r.stderr).toBe('');
    expect(r.code).toBe(0);
    expect(r.stdout).toMatch(/Assets: 30/);
    expect(r.stdout).toMatch(/Series: 8/);
    expect(r.stdout).toMatch(/not investment advice/);
    const again = run(['demo', '--db', db, '--json']);
    expect(again.code).toBe(0);
    const j = JSON.parse(again.stdout) as { info: { assets: unknown[]; imports: unknown[] }; caution: string };
    expect(j.info.assets).toHaveLength(30);
    expect(j.info.imports).toHaveLength(6); // replaced, not appended to
    const daily = JSON.parse(run(['demo', '--db', path.join(dir, 'daily.db'), '--set', 'daily', '--json']).stdout) as { info: { assets: { frequency: string }[] } };
    expect(daily.info.assets.map((a) => a.frequency)).toEqual(['daily', 'daily', 'daily', 'daily']);
    // not a deflator database: left alone
    const other = write(dir, 'notes.db', 'plain text, not SQLite');
    const refused = run(['demo', '--db', other]);
    expect(refused.code).toBe(1);
    expect(refused.stderr).toMatch(/exists and is not a deflator database; the demo will not replace it/);
  });
});
