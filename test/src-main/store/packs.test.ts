/**
 * Packed series (src-main/store/packs.ts): a pack is a copy of a subject's rows that exists
 * only while current. Checked on the invented demo market: a load packs what it read, and
 * what a pack gives back equals what the rows give, bit for bit (dates, prices, dividends,
 * split factors, share counts; series values), with the digest of the rows (the record's,
 * and the value node:crypto gives for the documented layout, test/src-main/runs/digests);
 * every write path drops the packs of the subjects it changes in its own transaction (an
 * import adding dates, an import with --replace, removing an import, and a change another
 * program makes with plain SQL), a failed import leaves them as they were, an import puts
 * the triggers back before it commits, and a read-only database reads its rows without
 * packing.
 */
import Database from 'better-sqlite3';
import { copyFileSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import type { NamedSeries, PriceHistory, StoredAsset } from '../../../shared/data.js';
import { importPrices, importSeries } from '../../../src-main/import/index.js';
import { DataFingerprinter } from '../../../src-main/runs/dependencies.js';
import { DateTexts, decodeHistory } from '../../../src-main/store/packs.js';
import { Store } from '../../../src-main/store/store.js';
import { editPrice, forgetImport, makeProject, type Project } from '../runs/helpers.js';

let p: Project;
beforeEach(async () => {
  p = await makeProject();
});
afterEach(() => p.store.close());

const packCount = (store: Store, kind: string) => store.db.prepare('SELECT count(*) FROM subject_pack WHERE kind = ?').pluck().get(kind) as number;
const sameBits = (a: ArrayLike<number> | undefined, b: ArrayLike<number> | undefined) => (a === undefined) === (b === undefined) && (!a || !b || (a.length === b.length && Array.from(a).every((v, i) => Object.is(v, b[i]))));

function sameHistory(a: StoredAsset, b: StoredAsset): boolean {
  const x = a as PriceHistory;
  const y = b as PriceHistory;
  return x.asset === y.asset && x.dates.join() === y.dates.join() && sameBits(x.price, y.price) && sameBits(x.dividend, y.dividend) && sameBits(x.adjust, y.adjust) && sameBits(x.shares, y.shares);
}

/** What the rows give: the same store's load with every pack taken away first (inside a rolled-back transaction, so the packs stay). */
function fromRows(store: Store): { assets: StoredAsset[]; series: NamedSeries[] } {
  let out: { assets: StoredAsset[]; series: NamedSeries[] } | undefined;
  store.db.prepare('SAVEPOINT norows').run();
  try {
    store.db.prepare('DELETE FROM subject_pack').run();
    out = { assets: store.loadAssets(), series: store.loadSeries() };
  } finally {
    store.db.prepare('ROLLBACK TO norows').run();
    store.db.prepare('RELEASE norows').run();
  }
  return out;
}

describe('packed series', () => {
  it('a load packs what it read; a pack gives back its rows bit for bit, with their digest', () => {
    expect(packCount(p.store, 'asset')).toBe(0);
    const first = p.store.loadAssets();
    const series = p.store.loadSeries();
    expect(packCount(p.store, 'asset')).toBe(first.length);
    expect(packCount(p.store, 'series')).toBe(series.length);
    const again = new Store(p.dbPath); // a new connection reads the packs
    try {
      const packed = again.loadAssets();
      const rows = fromRows(again);
      expect(packed.some((h) => (h as PriceHistory).adjust) && packed.some((h) => (h as PriceHistory).shares)).toBe(true);
      packed.forEach((h, i) => expect(sameHistory(h, rows.assets[i]), h.asset).toBe(true));
      const s = again.loadSeries();
      s.forEach((x, i) => {
        expect(x.dates.join()).toBe(rows.series[i].dates.join());
        expect(sameBits(x.values, rows.series[i].values)).toBe(true);
      });
      // the digest kept with each pack is the digest of the rows (hashed from them here)
      const fp = new DataFingerprinter(again);
      const viaRows = fromRowsDigests(again);
      for (const h of packed) expect(again.loadedDigest(h)).toEqual(viaRows.get(h.asset));
      for (const h of packed) expect(fp.subject({ kind: 'asset', name: h.asset })).toEqual(viaRows.get(h.asset));
    } finally {
      again.close();
    }
  });

  it('an import that adds dates, one with --replace, and removing an import drop the packs they touch; a failed import keeps them', async () => {
    p.store.loadAssets();
    p.store.loadSeries();
    const assets = packCount(p.store, 'asset');
    // a failed import (a duplicate row) changes nothing, packs included
    const bad = p.file('bad.csv');
    writeFileSync(bad, 'date,asset,price\n2030-01-31,corvane-saltworks,10\n2030-01-31,corvane-saltworks,11\n');
    await expect(importPrices(p.store, bad, { layout: 'long' })).rejects.toThrow(/duplicate/);
    expect(packCount(p.store, 'asset')).toBe(assets);
    // new dates for one asset: its pack goes, the others stay
    const more = p.file('more.csv');
    writeFileSync(more, 'date,asset,price\n2030-01-31,corvane-saltworks,10\n');
    await importPrices(p.store, more, { layout: 'long' });
    expect(packCount(p.store, 'asset')).toBe(assets - 1);
    const reloaded = p.store.loadAssets().find((h) => h.asset === 'corvane-saltworks') as PriceHistory;
    expect(reloaded.dates[reloaded.dates.length - 1]).toBe('2030-01-31');
    expect(packCount(p.store, 'asset')).toBe(assets);
    // a corrected file imported with --replace
    const corrected = p.file('prices-corrected.csv');
    copyFileSync(p.file('prices.csv'), corrected);
    editPrice(corrected, 'corvane-saltworks', '2010-06-30', 1.01);
    await importPrices(p.store, corrected, { layout: 'long', replace: true });
    expect(packCount(p.store, 'asset')).toBe(0);
    const after = p.store.loadAssets();
    fromRows(p.store).assets.forEach((h, i) => expect(sameHistory(after[i], h), h.asset).toBe(true));
    // taking an import out
    p.store.loadSeries();
    const seriesPacks = packCount(p.store, 'series');
    forgetImport(p.store, path.basename(p.file('factors.csv')));
    expect(packCount(p.store, 'series')).toBeLessThan(seriesPacks);
    await importSeries(p.store, p.file('factors.csv'), { kind: 'factor' });
    const s = p.store.loadSeries();
    fromRows(p.store).series.forEach((x, i) => expect(sameBits(s[i].values, x.values) && s[i].dates.join() === x.dates.join(), x.name).toBe(true));
  });

  it('a change made by another program with plain SQL drops the pack it touches (the triggers), so loads and digests follow the rows', () => {
    const before = p.store.loadAssets().find((h) => h.asset === 'brinemoor-ferries') as PriceHistory;
    const digest = p.store.loadedDigest(before);
    const other = new Database(p.dbPath);
    try {
      expect(other.prepare("SELECT count(*) FROM sqlite_master WHERE type = 'trigger' AND name LIKE '%_pack_%'").pluck().get()).toBe(6);
      other.prepare("UPDATE observation SET price = price * 1.01 WHERE asset_id = (SELECT id FROM asset WHERE name = 'brinemoor-ferries') AND date = (SELECT max(date) FROM observation)").run();
    } finally {
      other.close();
    }
    const after = p.store.loadAssets().find((h) => h.asset === 'brinemoor-ferries') as PriceHistory;
    const n = after.price.length;
    expect(after.price[n - 1]).toBe(before.price[n - 1] * 1.01);
    expect(p.store.loadedDigest(after)?.sha256).not.toBe(digest?.sha256);
    expect(new DataFingerprinter(p.store).subject({ kind: 'asset', name: 'brinemoor-ferries' })).toEqual(p.store.loadedDigest(after));
  });

  it('an import takes the triggers out only inside its own transaction', async () => {
    const triggers = () => p.store.db.prepare("SELECT count(*) FROM sqlite_master WHERE type = 'trigger' AND name LIKE '%_pack_%'").pluck().get();
    const more = p.file('later.csv');
    writeFileSync(more, 'date,asset,price\n2031-01-31,corvane-saltworks,10\n');
    await importPrices(p.store, more, { layout: 'long' });
    expect(triggers()).toBe(6);
    const bad = p.file('bad2.csv');
    writeFileSync(bad, 'date,asset,price\n2032-01-31,corvane-saltworks,10\n2032-01-31,corvane-saltworks,11\n');
    await expect(importPrices(p.store, bad, { layout: 'long' })).rejects.toThrow(/duplicate/);
    expect(triggers()).toBe(6);
  });

  it('a read-only database reads its rows and writes no pack', () => {
    p.store.close();
    const ro = new Store(p.dbPath, { readonly: true });
    try {
      expect(ro.loadAssets().length).toBeGreaterThan(10);
      expect(packCount(ro, 'asset')).toBe(0);
    } finally {
      ro.close();
    }
    p.store = new Store(p.dbPath);
  });
});

describe('packed series: decoding', () => {
  it('a pack decodes to the same bits from a buffer of its own (columns read in place) and from one sharing its memory at any offset (copied); loads never share memory', () => {
    p.store.loadAssets(); // packs them
    const rows = p.store.db.prepare("SELECT s.data, a.name FROM subject_pack s JOIN asset a ON a.id = s.subject_id WHERE s.kind = 'asset'").all() as { data: Buffer; name: string }[];
    expect(rows.length).toBeGreaterThan(0);
    for (const { data, name } of rows) {
      const own = decodeHistory(name, data, new DateTexts()) as PriceHistory;
      expect(own).not.toBeNull();
      for (const shift of [8, 3]) {
        const shared = Buffer.alloc(data.length + 16);
        data.copy(shared, shift);
        const inside = decodeHistory(name, shared.subarray(shift, shift + data.length), new DateTexts()) as PriceHistory;
        expect(sameHistory(own, inside), `${name}, offset ${shift}`).toBe(true);
        shared.fill(0); // the decoded columns are copies: clearing the shared memory leaves them
        expect(sameHistory(own, inside), `${name}, offset ${shift}, after the buffer changed`).toBe(true);
      }
    }
    const a = p.store.loadAssets() as PriceHistory[];
    const b = p.store.loadAssets() as PriceHistory[];
    const before = b[0].price[0];
    a[0].price[0] = -1;
    expect(b[0].price[0]).toBe(before);
  });
});

function fromRowsDigests(store: Store): Map<string, unknown> {
  const out = new Map<string, unknown>();
  store.db.prepare('SAVEPOINT digests').run();
  try {
    store.db.prepare('DELETE FROM subject_pack').run();
    const fp = new DataFingerprinter(store);
    for (const name of store.assets()) out.set(name, fp.subject({ kind: 'asset', name }));
  } finally {
    store.db.prepare('ROLLBACK TO digests').run();
    store.db.prepare('RELEASE digests').run();
  }
  return out;
}
