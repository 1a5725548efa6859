/**
 * Values at the ends of the double range (IEEE 754 binary64: about 1e-308 to 1.8e308).
 * Prices 1e-300 then 1e300 used to be stored with a warning "return Infinity%", after
 * which every fit on all assets failed; now a gross return that is not a finite positive
 * number is an error naming the file, line and asset, and nothing is stored. Consumption
 * and account levels the same for their growth; a consumption level far from any
 * plausible magnitude (1e-300 passed silently) now warns.
 */
import { writeFileSync } from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { importPrices, importSeries } from '../../src-main/import/index.js';
import { Store } from '../../src-main/store/store.js';
import { cleanTempDirs, databaseState, seedDatabase, tempDir } from './helpers.js';

let dir: string;
let db: string;
beforeAll(async () => {
  dir = tempDir();
  db = await seedDatabase(dir, 'extreme.db');
});
afterAll(() => cleanTempDirs());

async function refused(file: string, text: string, run: (store: Store, f: string) => Promise<unknown>): Promise<{ code?: string; message?: string }> {
  const f = path.join(dir, file);
  writeFileSync(f, text);
  const before = databaseState(db).digest;
  const store = new Store(db);
  let err: { code?: string; message?: string } = {};
  try {
    await run(store, f);
  } catch (e) {
    err = e as typeof err;
  } finally {
    store.close();
  }
  expect(databaseState(db).digest, `${file} changed the database`).toBe(before);
  return err;
}

describe('returns beyond the range of a double', () => {
  it('prices 1e-300 then 1e300 (long and wide files) are refused naming the file, line and asset', async () => {
    const long = await refused('long.csv', 'date,asset,price\n2021-01-29,kite-yard,1e-300\n2021-02-26,kite-yard,1e300\n2021-03-31,kite-yard,1\n', (s, f) => importPrices(s, f));
    expect(long.code).toBe('INPUT_INVALID');
    expect(long.message).toMatch(/long\.csv, line 3: kite-yard: the return from 2021-01-29 to 2021-02-26 \(price 1e-300, then 1e\+300\) is Infinity, beyond the range of a double/);
    const wide = await refused('wide.csv', 'date,kite-yard,fern-dock\n2021-01-29,1,1e300\n2021-02-26,2,1e-300\n', (s, f) => importPrices(s, f, { layout: 'wide' }));
    expect(wide.code).toBe('INPUT_INVALID');
    expect(wide.message).toMatch(/wide\.csv, line 3: fern-dock: the return from 2021-01-29 to 2021-02-26 .* is 0, beyond the range of a double/);
  });

  it('across imports: a new price 1e300 after a stored 1e-300 is refused too', async () => {
    const first = path.join(dir, 'first.csv');
    writeFileSync(first, 'date,asset,price\n2021-01-29,mist-quay,1\n2021-02-26,mist-quay,1e-300\n');
    const store = new Store(db);
    try {
      await importPrices(store, first);
    } finally {
      store.close();
    }
    const next = await refused('next.csv', 'date,asset,price\n2021-03-31,mist-quay,1e300\n', (s, f) => importPrices(s, f));
    expect(next.code).toBe('INPUT_INVALID');
    expect(next.message).toContain('mist-quay: the return from 2021-02-26 to 2021-03-31');
  });

  it('a consumption or account level whose growth overflows is refused naming the row', async () => {
    const c = await refused('cons.csv', 'date,spend\n2021-01-29,1e-300\n2021-02-26,1e300\n', (s, f) => importSeries(s, f, { kind: 'consumption' }));
    expect(c.code).toBe('INPUT_INVALID');
    expect(c.message).toMatch(/cons\.csv, line 3, column 2 \(spend\): spend goes from 1e-300 on 2021-01-29 to 1e\+300, a growth factor of Infinity/);
    const a = await refused('acct.csv', 'date,vault\n2021-01-29,1e300\n2021-02-26,1e-300\n', (s, f) => importSeries(s, f, { kind: 'riskfree', rfForm: 'account' }));
    expect(a.code).toBe('INPUT_INVALID');
    expect(a.message).toContain('vault goes from 1e+300 on 2021-01-29 to 1e-300');
  });
});

describe('implausible consumption levels warn', () => {
  it('a level of 1e-300 and a jump of more than 50 % in one period warn; an ordinary series does not', async () => {
    const f = path.join(dir, 'tiny.csv');
    writeFileSync(f, 'date,hearth\n2021-01-29,100\n2021-02-26,1e-300\n2021-03-31,1e-300\n');
    const store = new Store(db);
    try {
      const r = await importSeries(store, f, { kind: 'consumption' });
      const kinds = r.warnings.map((w) => w.kind);
      expect(kinds).toContain('implausible-level');
      expect(r.warnings.find((w) => w.kind === 'implausible-level')?.message).toContain('a consumption level of 1e-300 on 2021-02-26 is outside 1e-6 to 1e+15');
      expect(r.warnings.find((w) => w.kind === 'large-return')?.message).toContain('hearth: consumption changes by -100.0% from 2021-01-29 to 2021-02-26');
      const ok = path.join(dir, 'ordinary.csv');
      writeFileSync(ok, 'date,pantry\n2021-01-29,100\n2021-02-26,100.4\n2021-03-31,100.9\n');
      const q = await importSeries(store, ok, { kind: 'consumption' });
      expect(q.warnings.filter((w) => w.kind === 'implausible-level' || w.kind === 'large-return')).toEqual([]);
    } finally {
      store.close();
    }
  });
});
