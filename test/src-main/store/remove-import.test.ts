/**
 * Taking an import back out (Store.removeImport) and importing a corrected file over the
 * stored rows (the replace option): what is stored afterwards, compared with the files.
 * References: ECMA-262 Number(string) (StringToNumber, correctly rounded to the nearest
 * binary64) for what a CSV cell should read back as; csv-parse reads the files
 * independently of the import pipeline; SQLite's documentation of INTEGER PRIMARY KEY
 * (a new row gets max(rowid) + 1, so removing the last import frees its id).
 */
import { parse } from 'csv-parse/sync';
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { importPrices, importSeries } from '../../../src-main/import/index.js';
import { Store } from '../../../src-main/store/store.js';
import { BASE_PRICES, rejection, tempDir, write } from '../import/helpers.js';

const newStore = () => {
  const dir = tempDir();
  return { dir, store: new Store(path.join(dir, 'project.db')) };
};

/** Price rows of a long file, read by csv-parse: "asset date" -> [price, dividend]. */
function fileRows(file: string): Map<string, [number, number]> {
  const rows = parse(readFileSync(file), { columns: true, skip_empty_lines: true }) as Record<string, string>[];
  return new Map(rows.map((r) => [`${r.asset} ${r.date}`, [Number(r.price), r.dividend ? Number(r.dividend) : 0]]));
}

/** What the store holds, in the same shape. */
function storedRows(store: Store): Map<string, [number, number]> {
  const out = new Map<string, [number, number]>();
  for (const h of store.loadHistories()) h.dates.forEach((d, i) => out.set(`${h.asset} ${d}`, [h.price[i], h.dividend[i]]));
  return out;
}

/** Bit-for-bit equality of two maps of doubles (Object.is: -0 and NaN count). */
function expectSameBits(got: Map<string, [number, number]>, want: Map<string, [number, number]>): void {
  expect([...got.keys()].sort()).toEqual([...want.keys()].sort());
  for (const [k, [p, d]] of want) {
    const [gp, gd] = got.get(k)!;
    expect(Object.is(gp, p), `${k}: price stored ${gp}, file ${p}`).toBe(true);
    expect(Object.is(gd, d), `${k}: dividend stored ${gd}, file ${d}`).toBe(true);
  }
}

describe('removeImport', () => {
  it('removing the last import of prices restores the database digest to what it was before it', async () => {
    const { dir, store } = newStore();
    const empty = store.contentDigest();
    await importPrices(store, write(dir, 'base.csv', BASE_PRICES));
    const before = store.contentDigest();
    // new dates for a stored asset, and a new asset
    const r = await importPrices(store, write(dir, 'more.csv', 'date,asset,price\n2020-04-30,alpha,13\n2020-01-31,gamma,5\n2020-02-28,gamma,5.5\n'));
    expect(store.contentDigest()).not.toBe(before);
    const removed = store.removeImport(r.importId);
    expect(removed.rows).toBe(3);
    expect(removed.subjects).toEqual(['alpha', 'gamma']);
    expect(removed.subjectsRemoved).toEqual(['gamma']);
    expect(store.contentDigest()).toBe(before);
    expect(store.assets()).toEqual(['alpha', 'beta']);
    // and the first one, down to the empty database
    store.removeImport(1);
    expect(store.contentDigest()).toBe(empty);
    expect(store.importLog()).toEqual([]);
    store.close();
  });

  it('removing the last series import restores the digest; a series keeping other rows stays', async () => {
    const { dir, store } = newStore();
    await importSeries(store, write(dir, 'f1.csv', 'date,harbor\n2020-01-31,0.01\n2020-02-28,-0.02\n'), { kind: 'factor' });
    const before = store.contentDigest();
    const r = await importSeries(store, write(dir, 'f2.csv', 'date,harbor,ember\n2020-03-31,0.03,0.5\n'), { kind: 'factor' });
    const removed = store.removeImport(r.importId);
    expect(removed).toMatchObject({ rows: 2, subjects: ['ember', 'harbor'], subjectsRemoved: ['ember'] });
    expect(store.contentDigest()).toBe(before);
    expect(store.loadSeries(['harbor'])[0].dates).toEqual(['2020-01-31', '2020-02-28']);
    store.close();
  });

  it('an unknown id fails with NOT_FOUND naming it and the command that lists imports, and changes nothing', async () => {
    const { dir, store } = newStore();
    await importPrices(store, write(dir, 'base.csv', BASE_PRICES));
    const before = store.contentDigest();
    let err: (Error & { code?: string; hint?: string }) | undefined;
    try {
      store.removeImport(42);
    } catch (e) {
      err = e as Error & { code?: string; hint?: string };
    }
    expect(err?.code).toBe('NOT_FOUND');
    expect(err?.message).toContain('import 42');
    expect(err?.hint).toContain('deflator info --db DB');
    expect(store.contentDigest()).toBe(before);
    expect(store.db.inTransaction).toBe(false);
    store.close();
  });

  it('a prices import takes its wide dividends file along; the dividends entry alone is refused', async () => {
    const { dir, store } = newStore();
    const before = store.contentDigest();
    const prices = write(dir, 'p.csv', 'date,alpha,beta\n2020-01-31,10,20\n2020-02-28,11,21\n');
    const divs = write(dir, 'd.csv', 'date,alpha\n2020-02-28,0.5\n');
    const r = await importPrices(store, prices, { layout: 'wide', dividends: divs });
    expect(store.importLog().map((e) => e.kind)).toEqual(['prices', 'dividends']);
    const e = (() => {
      try {
        store.removeImport(r.importId + 1);
      } catch (x) {
        return x as Error & { code?: string };
      }
      return undefined;
    })();
    expect(e?.code).toBe('CONFLICT');
    expect(e?.message).toMatch(/is a dividends file/);
    const removed = store.removeImport(r.importId);
    expect(removed.entries.map((x) => x.kind)).toEqual(['prices', 'dividends']);
    expect(removed.rows).toBe(4);
    expect(store.contentDigest()).toBe(before);
    store.close();
  });
});

describe('import with replace', () => {
  const corrected = 'date,asset,price,dividend\n2020-01-31,alpha,10,\n2020-02-28,alpha,11.07,0.55\n2020-03-31,alpha,12,\n2020-01-31,beta,20,\n2020-02-28,beta,21,\n2020-03-31,beta,22.3,\n';

  it('without it a clash is refused and the message names --replace and `deflator import remove`', async () => {
    const { dir, store } = newStore();
    await importPrices(store, write(dir, 'base.csv', BASE_PRICES));
    const before = store.contentDigest();
    const e = await rejection(importPrices(store, write(dir, 'fixed.csv', corrected)));
    expect(e.code).toBe('CONFLICT');
    expect(e.message).toMatch(/\(asset, date\) = \(alpha, 2020-01-31\) is already stored, from base\.csv/);
    expect(e.hint).toContain('--replace');
    expect(e.hint).toContain('deflator import remove 1 --db DB');
    expect(store.contentDigest()).toBe(before);
    store.close();
  });

  it('a modified file replaces the stored rows: they read back bit for bit as the file (csv-parse, Number)', async () => {
    const { dir, store } = newStore();
    await importPrices(store, write(dir, 'base.csv', BASE_PRICES));
    const file = write(dir, 'base.csv', corrected);
    const r = await importPrices(store, file, { replace: true });
    expect(r.status).toBe('imported');
    expect(r.rowsStored).toBe(6);
    expect(r.replaced).toEqual([{ importId: 1, fileName: 'base.csv', rows: 5, removed: true }]);
    expect(r.warnings[0]).toMatchObject({ kind: 'replaced', message: expect.stringContaining('replaced 5 stored rows from import 1 (base.csv)') });
    expectSameBits(storedRows(store), fileRows(file));
    // the fully replaced import left the log, so its bytes are not taken for a repeat later
    expect(store.importLog().map((e) => e.id)).toEqual([r.importId]);
    expect(store.importLog()[0].warnings[0].kind).toBe('replaced');
    // the same bytes again: recognised by hash, nothing changes
    const digest = store.contentDigest();
    const again = await importPrices(store, file, { replace: true });
    expect(again.status).toBe('already-imported');
    expect(store.contentDigest()).toBe(digest);
    store.close();
  });

  it('a partial correction keeps the earlier import for its other rows; removing either takes exactly its own rows', async () => {
    const { dir, store } = newStore();
    const base = write(dir, 'base.csv', BASE_PRICES);
    await importPrices(store, base);
    const fix = write(dir, 'fix.csv', 'date,asset,price\n2020-02-28,beta,21.5\n2020-03-31,beta,22\n');
    const r = await importPrices(store, fix, { replace: true });
    expect(r.replaced).toEqual([{ importId: 1, fileName: 'base.csv', rows: 1, removed: false }]);
    const want = fileRows(base);
    want.set('beta 2020-02-28', [21.5, 0]);
    want.set('beta 2020-03-31', [22, 0]);
    expectSameBits(storedRows(store), want);
    const removed = store.removeImport(1);
    expect(removed.rows).toBe(4);
    expect(removed.subjectsRemoved).toEqual(['alpha']);
    expectSameBits(storedRows(store), fileRows(fix));
    store.close();
  });

  it('rows repeated within the file still fail, replace or not', async () => {
    const { dir, store } = newStore();
    await importPrices(store, write(dir, 'base.csv', BASE_PRICES));
    const before = store.contentDigest();
    const e = await rejection(importPrices(store, write(dir, 'dup.csv', 'date,asset,price\n2020-01-31,alpha,10\n2020-01-31,alpha,10.5\n'), { replace: true }));
    expect(e.message).toMatch(/duplicate \(asset, date\) = \(alpha, 2020-01-31\)/);
    expect(store.contentDigest()).toBe(before);
    store.close();
  });

  it('series: a corrected file replaces the stored values (percent units divided by 100 as on import)', async () => {
    const { dir, store } = newStore();
    await importSeries(store, write(dir, 'rf.csv', 'date,bill\n2020-01-31,1.25\n2020-02-28,1.30\n'), { kind: 'riskfree', units: 'percent' });
    const fixedText = 'date,bill\n2020-01-31,1.25\n2020-02-28,1.35\n2020-03-31,1.4\n';
    const refused = await rejection(importSeries(store, write(dir, 'rf2.csv', fixedText), { kind: 'riskfree', units: 'percent' }));
    expect(refused.hint).toContain('--replace');
    const r = await importSeries(store, write(dir, 'rf2.csv', fixedText), { kind: 'riskfree', units: 'percent', replace: true });
    expect(r.replaced).toEqual([{ importId: 1, fileName: 'rf.csv', rows: 2, removed: true }]);
    const rows = parse(fixedText, { columns: true }) as { date: string; bill: string }[];
    const s = store.loadSeries(['bill'])[0];
    expect(s.dates).toEqual(rows.map((x) => x.date));
    rows.forEach((x, i) => expect(Object.is(s.values[i], Number(x.bill) / 100), `${x.date}: ${s.values[i]} vs ${Number(x.bill) / 100}`).toBe(true));
    store.close();
  });
});
