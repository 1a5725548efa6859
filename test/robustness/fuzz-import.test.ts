/**
 * Property-based fuzzing of the CSV import (fast-check): random bytes, random quoting,
 * and valid files with one mutation. For every generated file:
 *   - the import either resolves or rejects with a DeflatorError that has a code from
 *     shared/errors.ts, a message (naming the file for input errors) and a hint; nothing
 *     else is thrown and no promise rejection goes unhandled;
 *   - a rejected import leaves the database digest (every table, the import log) as it
 *     was; an accepted one is whole: the rows under its log entry are the report's count,
 *     and, read independently by csv-parse (RFC 4180, npm) and Number() (ECMA-262
 *     StringToNumber), the same (asset, date, price) rows;
 *   - PRAGMA integrity_check = ok at the end.
 * Seeds are fixed (reproducible in CI); DEFLATOR_FUZZ_SEED=<n> tries another sequence.
 */
import fc from 'fast-check';
import { writeFileSync } from 'node:fs';
import path from 'node:path';
import { parse } from 'csv-parse/sync';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { isDeflatorError } from '../../shared/errors.js';
import { importPrices, importSeries, type ImportReport } from '../../src-main/import/index.js';
import { Store } from '../../src-main/store/store.js';
import { cleanTempDirs, digestOf, seedDatabase, stopwatch, tempDir } from './helpers.js';

const SEED = Number(process.env.DEFLATOR_FUZZ_SEED ?? 20261201);
const CODES = new Set(['SPEC_INVALID', 'INPUT_INVALID', 'DATA_MISSING', 'SAMPLE_TOO_SHORT', 'SINGULAR', 'NOT_POSITIVE_DEFINITE', 'NO_CONVERGENCE', 'UNDERIDENTIFIED', 'CANCELLED', 'NOT_FOUND', 'CONFLICT', 'FORBIDDEN']);

let dir: string;
let store: Store;
let unhandled = 0;
const onUnhandled = () => unhandled++;
const tally = { tried: 0, accepted: 0, rejected: 0, already: 0, compared: 0 };
let done: () => number;

beforeAll(async () => {
  done = stopwatch('fuzz import');
  process.on('unhandledRejection', onUnhandled);
  dir = tempDir();
  store = new Store(await seedDatabase(dir));
});
afterAll(() => {
  process.off('unhandledRejection', onUnhandled);
  const integrity = store.db.pragma('integrity_check', { simple: true });
  store.close();
  console.log(`[robustness] fuzz import: ${tally.tried} files tried, ${tally.accepted} accepted (${tally.compared} compared with csv-parse), ${tally.rejected} rejected, ${tally.already} already imported; integrity_check ${String(integrity)}; unhandled rejections ${unhandled}`);
  done();
  cleanTempDirs();
  expect(integrity).toBe('ok');
  expect(unhandled).toBe(0);
});

type Kind = { prices: { layout: 'long' | 'wide'; maxRejects: number } } | { series: { kind: 'factor' | 'riskfree' | 'consumption' | 'other'; units: 'decimal' | 'percent' } };

/** csv-parse's reading of the bytes (undefined when it refuses them). */
function reference(bytes: Uint8Array): string[][] | undefined {
  try {
    return parse(Buffer.from(bytes), { bom: true, skip_empty_lines: true, record_delimiter: ['\r\n', '\n', '\r'] }) as string[][];
  } catch {
    return undefined;
  }
}

const rowsOf = (importId: number): { asset: string; date: string; price: number }[] =>
  store.db
    .prepare('SELECT a.name AS asset, o.date, o.price FROM observation o JOIN asset a ON a.id = o.asset_id WHERE o.import_id = ? ORDER BY a.name, o.date')
    .all(importId) as { asset: string; date: string; price: number }[];

let n = 0;
/** Imports one generated file and checks the properties; returns false on a violated one (with the reason thrown). */
async function tryImport(bytes: Uint8Array, kind: Kind): Promise<void> {
  tally.tried++;
  const file = path.join(dir, `f${++n % 8}.csv`);
  writeFileSync(file, bytes);
  const before = digestOf(store.db).digest;
  let report: ImportReport;
  try {
    report = 'prices' in kind ? await importPrices(store, file, kind.prices) : await importSeries(store, file, { kind: kind.series.kind, units: kind.series.units });
  } catch (e) {
    if (!isDeflatorError(e)) throw new Error(`not a DeflatorError: ${e instanceof Error ? `${e.name}: ${e.message}\n${e.stack}` : String(e)}`);
    if (!CODES.has(e.code)) throw new Error(`unknown code ${e.code}`);
    if (!e.message || !e.hint) throw new Error(`error without message or hint: ${e.message} / ${e.hint}`);
    if (e.code === 'INPUT_INVALID' && !e.message.startsWith(file)) throw new Error(`input error does not name the file: ${e.message}`);
    if (store.db.inTransaction) throw new Error('a transaction was left open');
    const after = digestOf(store.db).digest;
    if (after !== before) throw new Error(`rejected import changed the database (${e.message})`);
    tally.rejected++;
    return;
  }
  if (store.db.inTransaction) throw new Error('a transaction was left open');
  if (report.status === 'already-imported') {
    tally.already++;
    if (digestOf(store.db).digest !== before) throw new Error('an already-imported file changed the database');
    return;
  }
  tally.accepted++;
  const logged = store.importById(report.importId);
  if (!logged || logged.rowsStored !== report.rowsStored) throw new Error(`log entry ${report.importId} does not match the report`);
  if ('prices' in kind) {
    const stored = rowsOf(report.importId);
    if (stored.length !== report.rowsStored) throw new Error(`report says ${report.rowsStored} rows, the store holds ${stored.length}`);
    if (kind.prices.layout === 'long') {
      if (report.rowsRead !== report.rowsStored + report.rowsRejected) throw new Error(`read ${report.rowsRead} != stored ${report.rowsStored} + rejected ${report.rowsRejected}`);
      const ref = reference(bytes);
      if (kind.prices.maxRejects === 0 && ref) {
        const header = ref[0].map((h) => h.trim().toLowerCase());
        const [di, ai, pi] = ['date', 'asset', 'price'].map((c) => header.indexOf(c));
        const want = ref
          .slice(1)
          .map((r) => ({ asset: r[ai].trim(), date: r[di].trim(), price: Number(r[pi]) }))
          .sort((x, y) => (x.asset === y.asset ? (x.date < y.date ? -1 : 1) : x.asset < y.asset ? -1 : 1));
        expect(stored).toEqual(want);
        tally.compared++;
      }
    }
  } else {
    const count = store.db.prepare('SELECT count(*) FROM series_observation WHERE import_id = ?').pluck().get(report.importId) as number;
    if (count !== report.rowsStored) throw new Error(`report says ${report.rowsStored} values, the store holds ${count}`);
  }
  forget(report.importId);
}

/**
 * Takes an accepted import back out (test code, not the store's), so the database stays
 * at the seed's size and each digest stays cheap; the digest must then be the seed's
 * again, apart from the names the import added.
 */
function forget(importId: number): void {
  store.db.transaction(() => {
    const ids = store.db.prepare('SELECT id FROM import_log WHERE id >= ?').pluck().all(importId) as number[];
    for (const id of ids) {
      store.db.prepare('DELETE FROM observation WHERE import_id = ?').run(id);
      store.db.prepare('DELETE FROM series_observation WHERE import_id = ?').run(id);
      store.db.prepare('DELETE FROM import_log WHERE id = ?').run(id);
    }
    store.db.prepare('DELETE FROM asset WHERE id NOT IN (SELECT DISTINCT asset_id FROM observation)').run();
    store.db.prepare('DELETE FROM series WHERE id NOT IN (SELECT DISTINCT series_id FROM series_observation)').run();
  })();
}

// ---------- generators

const te = new TextEncoder();
const ASSET = fc.stringMatching(/^[a-z][a-z0-9-]{0,9}$/);
const HOSTILE_TOKENS = ['"', '""', ',', '\n', '\r', '\r\n', ';', '\t', '\u0000', '\uFEFF', 'NaN', 'nan', 'inf', '-Infinity', '#N/A', '1e400', '-', '+', 'e', '.', ' ', '0', '-0', '1e-400', '9'.repeat(320), '2023-02-30', '0000-01-01', '2023-13-01', 'é', '水'];
const BAD_BYTES = [[0xff], [0xc3], [0xe2, 0x82], [0xed, 0xa0, 0x80], [0xc0, 0xaf], [0xfe, 0xff], [0x00]];

const dateOf = (month: number) => {
  const y = Math.floor(month / 12);
  const m = (month % 12) + 1;
  const last = new Date(Date.UTC(y, m, 0)).getUTCDate();
  return `${String(y).padStart(4, '0')}-${String(m).padStart(2, '0')}-${String(last).padStart(2, '0')}`;
};

/** A valid long price file: a few assets, consecutive month ends, positive prices. */
const validLong = fc
  .record({
    assets: fc.uniqueArray(ASSET, { minLength: 1, maxLength: 4 }),
    start: fc.integer({ min: 1990 * 12, max: 2035 * 12 }),
    months: fc.integer({ min: 1, max: 14 }),
    prices: fc.array(fc.double({ min: 0.01, max: 5000, noNaN: true }), { minLength: 60, maxLength: 60 }),
    dividend: fc.boolean(),
    crlf: fc.boolean(),
  })
  .map(({ assets, start, months, prices, dividend, crlf }) => {
    const eol = crlf ? '\r\n' : '\n';
    let text = `date,asset,price${dividend ? ',dividend' : ''}${eol}`;
    let k = 0;
    for (let t = 0; t < months; t++) for (const a of assets) text += `${dateOf(start + t)},${a},${prices[k++ % prices.length].toPrecision(6)}${dividend ? `,${t % 3 === 2 ? '0.1' : ''}` : ''}${eol}`;
    return text;
  });

/** A valid wide series file. */
const validSeries = fc
  .record({
    names: fc.uniqueArray(fc.stringMatching(/^[a-z][a-z0-9_]{0,7}$/).filter((s) => s !== 'date'), { minLength: 1, maxLength: 3 }),
    start: fc.integer({ min: 1990 * 12, max: 2035 * 12 }),
    months: fc.integer({ min: 1, max: 12 }),
    values: fc.array(fc.double({ min: 0.001, max: 0.2, noNaN: true }), { minLength: 40, maxLength: 40 }),
  })
  .map(({ names, start, months, values }) => {
    let text = `date,${names.join(',')}\n`;
    let k = 0;
    for (let t = 0; t < months; t++) text += `${dateOf(start + t)},${names.map(() => values[k++ % values.length].toFixed(5)).join(',')}\n`;
    return text;
  });

/** One mutation of a file's bytes. */
const mutation = fc.oneof(
  fc.record({ op: fc.constant('delete' as const), at: fc.double({ min: 0, max: 1, noNaN: true }), len: fc.integer({ min: 1, max: 12 }) }),
  fc.record({ op: fc.constant('insert' as const), at: fc.double({ min: 0, max: 1, noNaN: true }), token: fc.constantFrom(...HOSTILE_TOKENS) }),
  fc.record({ op: fc.constant('bytes' as const), at: fc.double({ min: 0, max: 1, noNaN: true }), bytes: fc.constantFrom(...BAD_BYTES) }),
  fc.record({ op: fc.constant('truncate' as const), at: fc.double({ min: 0, max: 1, noNaN: true }) }),
  fc.record({ op: fc.constant('field' as const), line: fc.nat(), col: fc.nat(), token: fc.constantFrom(...HOSTILE_TOKENS, '', '""', '"12.5"', ' 12 ', '1,5') }),
  fc.record({ op: fc.constant('duplicate-line' as const), line: fc.nat() }),
  fc.record({ op: fc.constant('swap-lines' as const), a: fc.nat(), b: fc.nat() }),
  fc.record({ op: fc.constant('delimiter' as const), to: fc.constantFrom(';', '\t', '|') }),
);
type Mutation = typeof mutation extends fc.Arbitrary<infer M> ? M : never;

function mutate(text: string, m: Mutation): Uint8Array {
  const b = te.encode(text);
  const pos = (at: number) => Math.min(b.length, Math.floor(at * (b.length + 1)));
  const cat = (...parts: Uint8Array[]) => {
    const out = new Uint8Array(parts.reduce((s, p) => s + p.length, 0));
    let o = 0;
    for (const p of parts) (out.set(p, o), (o += p.length));
    return out;
  };
  const lines = () => text.split('\n');
  switch (m.op) {
    case 'delete': {
      const p = pos(m.at);
      return cat(b.subarray(0, p), b.subarray(Math.min(b.length, p + m.len)));
    }
    case 'insert': {
      const p = pos(m.at);
      return cat(b.subarray(0, p), te.encode(m.token), b.subarray(p));
    }
    case 'bytes': {
      const p = pos(m.at);
      return cat(b.subarray(0, p), Uint8Array.from(m.bytes), b.subarray(p));
    }
    case 'truncate':
      return b.subarray(0, pos(m.at));
    case 'field': {
      const ls = lines();
      const i = m.line % ls.length;
      const cells = ls[i].split(',');
      cells[m.col % cells.length] = m.token;
      ls[i] = cells.join(',');
      return te.encode(ls.join('\n'));
    }
    case 'duplicate-line': {
      const ls = lines();
      const i = m.line % ls.length;
      ls.splice(i, 0, ls[i]);
      return te.encode(ls.join('\n'));
    }
    case 'swap-lines': {
      const ls = lines();
      const i = m.a % ls.length;
      const j = m.b % ls.length;
      [ls[i], ls[j]] = [ls[j], ls[i]];
      return te.encode(ls.join('\n'));
    }
    case 'delimiter':
      return te.encode(text.replaceAll(',', m.to));
  }
}

/** Records of random fields, each unquoted, properly quoted, or quoted with broken escaping. */
const FIELD_CHARS = fc.constantFrom('a', 'b', 'z', '0', '1', '5', '9', '.', '-', ',', '"', '\n', '\r', ' ', 'e', '+', '/', 'é');
const field = fc.record({ text: fc.string({ unit: FIELD_CHARS, maxLength: 12 }), quoting: fc.constantFrom('none', 'proper', 'broken', 'good-value') });
const quotedFile = fc
  .record({
    header: fc.constantFrom('date,asset,price', 'date,asset,price,dividend', '"date","asset","price"', 'date,"asset",price'),
    rows: fc.array(fc.tuple(fc.integer({ min: 2000 * 12, max: 2030 * 12 }), field, field, field), { maxLength: 12 }),
    eol: fc.constantFrom('\n', '\r\n', '\r'),
  })
  .map(({ header, rows, eol }) => {
    const cell = (f: { text: string; quoting: string }, good: string) => {
      switch (f.quoting) {
        case 'none':
          return f.text;
        case 'proper':
          return `"${f.text.replaceAll('"', '""')}"`;
        case 'broken':
          return `"${f.text}"`;
        default:
          return good;
      }
    };
    const cols = header.split(',').length;
    const lines = rows.map(([month, a, p, d]) => {
      const cells = [dateOf(month), cell(a, `"as""${(month % 5) + 1}"`), cell(p, `${(month % 97) + 1}.25`)];
      if (cols === 4) cells.push(cell(d, ''));
      return cells.join(',');
    });
    return te.encode([header, ...lines].join(eol) + eol);
  });

const priceKind = fc.record({ layout: fc.constantFrom('long' as const, 'long' as const, 'wide' as const), maxRejects: fc.constantFrom(0, 0, 0, 2) }).map((prices) => ({ prices }) as Kind);
const seriesKind = fc.record({ kind: fc.constantFrom('factor' as const, 'riskfree' as const, 'consumption' as const, 'other' as const), units: fc.constantFrom('decimal' as const, 'percent' as const) }).map((series) => ({ series }) as Kind);

const RUNS = { bytes: 1200, quoting: 1500, mutated: 2500, series: 800 };
const settings = (k: number, numRuns: number) => ({ seed: SEED + k, numRuns, endOnFailure: true });

describe('fuzzing the CSV import', () => {
  it(`random bytes (${RUNS.bytes} files, with and without a valid header)`, async () => {
    const t0 = performance.now();
    await fc.assert(
      fc.asyncProperty(fc.uint8Array({ maxLength: 600 }), fc.constantFrom('', 'date,asset,price\n', 'date,a,b\n', '\uFEFFdate,asset,price\r\n'), priceKind, async (bytes, head, kind) => {
        await tryImport(new Uint8Array([...te.encode(head), ...bytes]), kind);
      }),
      settings(1, RUNS.bytes),
    );
    console.log(`[robustness] fuzz import, random bytes: ${RUNS.bytes} files in ${((performance.now() - t0) / 1000).toFixed(1)} s`);
  }, 120_000);

  it(`random quoting (${RUNS.quoting} files)`, async () => {
    const t0 = performance.now();
    await fc.assert(fc.asyncProperty(quotedFile, priceKind, async (bytes, kind) => tryImport(bytes, kind)), settings(2, RUNS.quoting));
    console.log(`[robustness] fuzz import, random quoting: ${RUNS.quoting} files in ${((performance.now() - t0) / 1000).toFixed(1)} s`);
  }, 120_000);

  it(`valid price files with one mutation (${RUNS.mutated} files)`, async () => {
    const t0 = performance.now();
    await fc.assert(
      fc.asyncProperty(validLong, fc.option(mutation, { freq: 6 }), fc.constantFrom(0, 0, 0, 3), async (text, m, maxRejects) => {
        await tryImport(m ? mutate(text, m) : te.encode(text), { prices: { layout: 'long', maxRejects } });
      }),
      settings(3, RUNS.mutated),
    );
    console.log(`[robustness] fuzz import, mutated price files: ${RUNS.mutated} files in ${((performance.now() - t0) / 1000).toFixed(1)} s`);
  }, 120_000);

  it(`valid series files with one mutation (${RUNS.series} files)`, async () => {
    const t0 = performance.now();
    await fc.assert(
      fc.asyncProperty(validSeries, fc.option(mutation, { freq: 5 }), seriesKind, async (text, m, kind) => {
        await tryImport(m ? mutate(text, m) : te.encode(text), kind);
      }),
      settings(4, RUNS.series),
    );
    console.log(`[robustness] fuzz import, mutated series files: ${RUNS.series} files in ${((performance.now() - t0) / 1000).toFixed(1)} s`);
  }, 120_000);
});
