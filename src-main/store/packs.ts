/**
 * Packed series: one blob per price history or named series beside its keyed rows
 * (table subject_pack, schema 5), holding the same rows column by column, so that a panel
 * load reads one blob per subject instead of one row object per date (a daily panel of a
 * million rows: about 0.05 s instead of about 1 s), and with the subject's digest (the run
 * record's, src-main/runs/dependencies.ts subjectDigest) so that neither the record nor the
 * staleness check hashes the rows again.
 *
 * Guarantees. The keyed rows stay the truth: a pack is a copy, and there is a copy only
 * when it is current.
 * - Any write to a subject's rows drops its pack in the same transaction: triggers on the
 *   row tables do it for every writer (this program, the sqlite3 shell, another program);
 *   an import drops the packs of the subjects it touches itself (ImportSession.assetId /
 *   seriesId, the first time a subject is named) and suspends the triggers for its own
 *   transaction, so a million inserted rows do not fire them. An import that rolls back
 *   rolls all of it back.
 * - A pack is (re)built from the rows by a read that finds none (`Packs.ensure`), inside a
 *   write transaction that reads the rows and stores the pack together, so no other
 *   writer's commit can fall between them. A read-only database, or one another program is
 *   writing to (no wait: busy timeout 0), just reads the rows that time.
 * - Dates that are not 10 characters (never the case for the store's ISO dates) are not
 *   packed; such a subject is read from its rows.
 *
 * The row also holds the ids of the imports the rows came from (the run record's data
 * files), so that a record does not scan the rows for them either.
 *
 * Layout (little-endian): "DFPK", u32 layout version (1), u32 kind (0 price history,
 * 1 named series), u32 n, u32 flags (bit 0 split factors, bit 1 share counts), then n dates
 * of 10 ASCII bytes, padded to a multiple of 8, then float64 columns of n: price, dividend,
 * [adjust], [shares, NaN where none] (price histories) or value (series).
 */
import type Database from 'better-sqlite3';
import { preparedOnUse } from './sqlite.js';
import type { NamedSeries, PriceHistory } from '../../shared/data.js';
import type { SubjectFingerprint } from '../../shared/records/run-record.js';
import { subjectDigest } from '../runs/dependencies.js';

const MAGIC = 0x4b504644; // "DFPK" little-endian
const LAYOUT = 1;
const HEADER = 20;
const DATE_BYTES = 10;

export type PackKind = 'asset' | 'series';

interface PackRow {
  data: Buffer;
  sha256: string;
  rows: number;
}

function datesPackable(dates: readonly string[]): boolean {
  for (const d of dates) if (d.length !== DATE_BYTES) return false;
  return true;
}

function layout(n: number, columns: number): { datesAt: number; colsAt: number; size: number } {
  const datesAt = HEADER;
  const colsAt = Math.ceil((datesAt + n * DATE_BYTES) / 8) * 8;
  return { datesAt, colsAt, size: colsAt + columns * n * 8 };
}

function encode(kind: 0 | 1, flags: number, dates: readonly string[], columns: readonly ArrayLike<number>[]): Buffer | null {
  const n = dates.length;
  if (!datesPackable(dates)) return null;
  const l = layout(n, columns.length);
  const buf = Buffer.alloc(l.size);
  buf.writeUInt32LE(MAGIC, 0);
  buf.writeUInt32LE(LAYOUT, 4);
  buf.writeUInt32LE(kind, 8);
  buf.writeUInt32LE(n, 12);
  buf.writeUInt32LE(flags, 16);
  for (let i = 0; i < n; i++) buf.write(dates[i], l.datesAt + i * DATE_BYTES, DATE_BYTES, 'latin1');
  const f = new Float64Array(buf.buffer, buf.byteOffset + l.colsAt, columns.length * n);
  columns.forEach((c, j) => {
    for (let i = 0; i < n; i++) f[j * n + i] = c[i];
  });
  return buf;
}

/**
 * Date strings shared across the subjects of one load: the same trading date read from a
 * hundred packs is one string (so that the returns engine's date memo finds it by identity),
 * and a run of dates equal, byte for byte, to the previous pack's is the same array (the
 * usual daily panel: every asset on the same trading days; its dates are parsed once).
 */
export class DateTexts {
  private readonly byKey = new Map<number, string>();
  private last: { buf: Buffer; dates: string[] } | null = null;

  /** The n dates at the start of a pack's date block (arrays handed out are shared: never modify them). */
  block(buf: Buffer, n: number): string[] {
    const end = HEADER + n * DATE_BYTES;
    const prev = this.last;
    if (prev && prev.dates.length === n && buf.compare(prev.buf, HEADER, end, HEADER, end) === 0) return prev.dates;
    const dates = new Array<string>(n);
    for (let i = 0; i < n; i++) dates[i] = this.text(buf, HEADER + i * DATE_BYTES);
    // shared by every subject with these dates: frozen, so the returns engine may parse it once
    Object.freeze(dates);
    this.last = { buf, dates };
    return dates;
  }

  text(buf: Buffer, at: number): string {
    // YYYYMMDD from the bytes of "YYYY-MM-DD" (a key only; the text itself is returned)
    const key = ((((((buf[at] * 10 + buf[at + 1]) * 10 + buf[at + 2]) * 10 + buf[at + 3]) * 10 + buf[at + 5]) * 10 + buf[at + 6]) * 10 + buf[at + 8]) * 10 + buf[at + 9];
    const hit = this.byKey.get(key);
    if (hit !== undefined) {
      let same = true;
      for (let i = 0; i < DATE_BYTES && same; i++) same = hit.charCodeAt(i) === buf[at + i];
      if (same) return hit;
    }
    const s = buf.toString('latin1', at, at + DATE_BYTES);
    if (s.charCodeAt(4) === 45 && s.charCodeAt(7) === 45) this.byKey.set(key, s);
    return s;
  }
}

function header(buf: Buffer): { kind: number; n: number; flags: number } | null {
  if (buf.length < HEADER || buf.readUInt32LE(0) !== MAGIC || buf.readUInt32LE(4) !== LAYOUT) return null;
  return { kind: buf.readUInt32LE(8), n: buf.readUInt32LE(12), flags: buf.readUInt32LE(16) };
}

function column(buf: Buffer, colsAt: number, n: number, j: number): Float64Array {
  const start = buf.byteOffset + colsAt + j * n * 8;
  // The blob is a fresh buffer of its own (the driver copies it out of SQLite for each row
  // read): a view on it, with no copy, when it owns its whole memory and the column is aligned
  if (buf.byteOffset === 0 && buf.buffer.byteLength === buf.length && start % 8 === 0) return new Float64Array(buf.buffer, start, n);
  // otherwise (a buffer sharing its memory, e.g. a pooled one) a copy
  const out = new Float64Array(n);
  if (start % 8 === 0) out.set(new Float64Array(buf.buffer, start, n));
  else for (let i = 0; i < n; i++) out[i] = buf.readDoubleLE(colsAt + (j * n + i) * 8);
  return out;
}

function readDates(buf: Buffer, n: number, texts: DateTexts): string[] {
  return texts.block(buf, n);
}

/** The pack of a price history (null when its dates cannot be packed). */
export function encodeHistory(h: PriceHistory): Buffer | null {
  const flags = (h.adjust ? 1 : 0) | (h.shares ? 2 : 0);
  const cols: ArrayLike<number>[] = [h.price, h.dividend];
  if (h.adjust) cols.push(h.adjust);
  if (h.shares) cols.push(h.shares);
  return encode(0, flags, h.dates, cols);
}

export function decodeHistory(asset: string, buf: Buffer, texts: DateTexts): PriceHistory | null {
  const hd = header(buf);
  if (!hd || hd.kind !== 0) return null;
  const n = hd.n;
  const cols = 2 + (hd.flags & 1) + ((hd.flags >> 1) & 1);
  const l = layout(n, cols);
  if (buf.length !== l.size) return null;
  const h: PriceHistory = { asset, dates: readDates(buf, n, texts), price: column(buf, l.colsAt, n, 0), dividend: column(buf, l.colsAt, n, 1) };
  let j = 2;
  if (hd.flags & 1) h.adjust = column(buf, l.colsAt, n, j++);
  if (hd.flags & 2) h.shares = column(buf, l.colsAt, n, j++);
  return h;
}

export function encodeSeries(s: Pick<NamedSeries, 'dates' | 'values'>): Buffer | null {
  return encode(1, 0, s.dates, [s.values]);
}

export function decodeSeries(buf: Buffer, texts: DateTexts): { dates: string[]; values: Float64Array } | null {
  const hd = header(buf);
  if (!hd || hd.kind !== 1) return null;
  const l = layout(hd.n, 1);
  if (buf.length !== l.size) return null;
  return { dates: readDates(buf, hd.n, texts), values: column(buf, l.colsAt, hd.n, 0) };
}

/** The subject digest of a price history or series as loaded (the same bytes as from its rows). */
export function historyDigest(h: PriceHistory): SubjectFingerprint {
  const n = h.dates.length;
  return subjectDigest({ kind: 'asset', name: h.asset, dates: h.dates, values: [h.price, h.dividend, h.adjust ?? new Float64Array(n).fill(1)], optional: h.shares ?? new Float64Array(n).fill(Number.NaN) });
}

export function seriesDigest(name: string, s: Pick<NamedSeries, 'dates' | 'values'>): SubjectFingerprint {
  return subjectDigest({ kind: 'series', name, dates: s.dates, values: [s.values] });
}

/**
 * Triggers that drop a subject's pack whenever its rows change by any route: this program,
 * the sqlite3 shell, any other program writing the file. Each fires per row but does work
 * only while the subject still has a pack (the WHEN clause). An import (ImportSession), the
 * one bulk writer, drops the packs of the subjects it touches itself and takes the triggers
 * out for its own transaction (`suspendTriggers`), putting them back before it commits, so
 * its inserts do not pay for them; a rolled-back import rolls that back too, and no other
 * connection ever sees the database without them.
 */
const TRIGGERS: { name: string; sql: string }[] = (() => {
  const out: { name: string; sql: string }[] = [];
  for (const [table, kind, col] of [
    ['observation', 'asset', 'asset_id'],
    ['series_observation', 'series', 'series_id'],
  ] as const) {
    const drop = (row: 'NEW' | 'OLD') => `DELETE FROM subject_pack WHERE kind = '${kind}' AND subject_id = ${row}.${col};`;
    const has = (row: 'NEW' | 'OLD') => `EXISTS (SELECT 1 FROM subject_pack WHERE kind = '${kind}' AND subject_id = ${row}.${col})`;
    out.push({ name: `${table}_pack_insert`, sql: `CREATE TRIGGER ${table}_pack_insert AFTER INSERT ON ${table} WHEN ${has('NEW')} BEGIN ${drop('NEW')} END` });
    out.push({ name: `${table}_pack_update`, sql: `CREATE TRIGGER ${table}_pack_update AFTER UPDATE ON ${table} WHEN ${has('NEW')} OR ${has('OLD')} BEGIN ${drop('NEW')} ${drop('OLD')} END` });
    out.push({ name: `${table}_pack_delete`, sql: `CREATE TRIGGER ${table}_pack_delete AFTER DELETE ON ${table} WHEN ${has('OLD')} BEGIN ${drop('OLD')} END` });
  }
  return out;
})();

/** The triggers' DDL (migration 7 runs it: change the triggers only with a new migration). */
export const PACK_TRIGGERS_SQL = TRIGGERS.map((t) => `${t.sql};`).join('\n');

/** Inside the caller's write transaction: the triggers out; the returned function puts them back (call it before COMMIT). */
export function suspendTriggers(db: Database.Database): () => void {
  for (const t of TRIGGERS) db.exec(`DROP TRIGGER IF EXISTS ${t.name}`);
  return () => {
    for (const t of TRIGGERS) db.exec(t.sql);
  };
}

/** The pack table's statements on one connection. */
export class Packs {
  private readonly st;

  constructor(private readonly db: Database.Database) {
    // each prepared when first used: a fit from the panel cache reads no pack
    this.st = preparedOnUse(db, {
      get: (d) => d.prepare('SELECT rows, sha256, data FROM subject_pack WHERE kind = ? AND subject_id = ?'),
      put: (d) => d.prepare('INSERT OR REPLACE INTO subject_pack (kind, subject_id, rows, sha256, imports, data) VALUES (?, ?, ?, ?, ?, ?)'),
      drop: (d) => d.prepare('DELETE FROM subject_pack WHERE kind = ? AND subject_id = ?'),
      digest: (d) => d.prepare('SELECT sha256, rows FROM subject_pack WHERE kind = ? AND subject_id = ?'),
      assetImports: (d) => d.prepare('SELECT DISTINCT import_id FROM observation WHERE asset_id = ? ORDER BY import_id').pluck(),
      seriesImports: (d) => d.prepare('SELECT DISTINCT import_id FROM series_observation WHERE series_id = ? ORDER BY import_id').pluck(),
    });
  }

  get(kind: PackKind, id: number): PackRow | undefined {
    return this.st.get.get(kind, id) as PackRow | undefined;
  }

  /** The stored digest of a subject's current rows, when it has a pack. */
  digest(kind: PackKind, id: number): { sha256: string; rows: number } | undefined {
    return this.st.digest.get(kind, id) as { sha256: string; rows: number } | undefined;
  }

  /** Stores a pack (with the ids of the imports the subject's rows come from, read here). */
  put(kind: PackKind, id: number, rows: number, data: Buffer, sha256: string): void {
    if (this.failed || !this.db.inTransaction) return;
    try {
      const imports = (kind === 'asset' ? this.st.assetImports : this.st.seriesImports).all(id) as number[];
      this.st.put.run(kind, id, rows, sha256, JSON.stringify(imports), data);
    } catch {
      // e.g. the disk is full: no packs this time (withWrite rolls back what was stored)
      this.failed = true;
    }
  }

  /** Drops a subject's pack (its rows are about to change, in the caller's transaction). */
  drop(kind: PackKind, id: number): void {
    this.st.drop.run(kind, id);
  }

  /**
   * Runs `fn` inside one write transaction, so that the packs it stores go with the rows it
   * read (no other writer's commit falls between them), and tells it whether it may store
   * packs: false, without a transaction, when the database cannot be written right now
   * (read-only, inside another transaction, or another writer holds the lock: no wait).
   */
  withWrite<T>(fn: (canPack: boolean) => T): T {
    if (this.db.readonly || this.db.inTransaction) return fn(false);
    const previous = Number(this.db.pragma('busy_timeout', { simple: true }));
    this.db.pragma('busy_timeout = 0');
    let began = false;
    try {
      this.db.prepare('BEGIN IMMEDIATE').run();
      began = true;
    } catch {
      // another program is writing: no packs this time
    } finally {
      this.db.pragma(`busy_timeout = ${previous}`);
    }
    if (!began) return fn(false);
    this.failed = false;
    let out: T;
    try {
      out = fn(true);
    } catch (e) {
      if (this.db.inTransaction) this.db.prepare('ROLLBACK').run();
      throw e;
    }
    // The packs are a copy: when they cannot be stored (a full disk), the load stands without them.
    try {
      if (this.db.inTransaction) this.db.prepare(this.failed ? 'ROLLBACK' : 'COMMIT').run();
    } catch {
      try {
        if (this.db.inTransaction) this.db.prepare('ROLLBACK').run();
      } catch {
        // nothing stored; the rows read are what the caller uses
      }
    }
    return out;
  }

  /** Set when a pack could not be stored during withWrite (the rest are not tried). */
  private failed = false;
}
