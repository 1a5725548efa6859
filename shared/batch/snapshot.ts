/**
 * A snapshot of the returns panels a batch needs, so that shards read one folder and
 * never the project database. Two parts:
 *
 *   columns: every distinct series (asset returns, factors, risk-free, consumption
 *            growth, instruments, ...: every Float64Array of the panel) once, as float64
 *            little-endian, one after another (columns.f64);
 *   index:   exact JSON (panels.json): per column its offset and length in values; per
 *            panel its fingerprint and the panel itself with each series replaced by
 *            {"$col": n}, so every field a panel has (now or later) is kept, in its order.
 *
 * Panels of a factor-subset grid share most of their series, so a column shared by
 * several panels is stored once. Reading rebuilds every panel and checks its
 * fingerprint (shared/records/panel-encoding.ts) against the index: a damaged or
 * edited snapshot is refused, never estimated on.
 */
import { DeflatorError } from '../errors.js';
import type { ReturnsPanel } from '../panel.js';
import { fingerprintPanel } from '../records/panel-encoding.js';
import type { PanelFingerprint } from '../records/run-record.js';
import { Sha256, sha256Hex, toHex } from '../records/sha256.js';
import { parseExact, stringifyExact } from '../records/exact-json.js';

export const SNAPSHOT_FORMAT = 'deflator panel snapshot';
export const SNAPSHOT_VERSION = 1;

/** A panel as stored: every Float64Array replaced by `{"$col": n}`, everything else as it is. */
export interface SnapshotPanel {
  fingerprint: PanelFingerprint;
  panel: unknown;
}

export interface SnapshotIndex {
  format: typeof SNAPSHOT_FORMAT;
  version: number;
  /** Offset (in values, not bytes) and length of each column in the columns file. */
  columns: { offset: number; length: number }[];
  panels: SnapshotPanel[];
}

const LITTLE_ENDIAN = new Uint8Array(Float64Array.of(1).buffer)[7] === 0x3f;

/** The series as float64 little-endian bytes (a copy of its memory where the machine is little-endian). */
function columnBytes(values: Float64Array): Uint8Array {
  if (LITTLE_ENDIAN) return new Uint8Array(Float64Array.from(values).buffer);
  const out = new Uint8Array(values.length * 8);
  const view = new DataView(out.buffer);
  for (let i = 0; i < values.length; i++) view.setFloat64(i * 8, values[i], true);
  return out;
}

const isColumnRef = (x: unknown): x is { $col: number } => {
  if (x === null || typeof x !== 'object' || Array.isArray(x)) return false;
  const keys = Object.keys(x);
  return keys.length === 1 && keys[0] === '$col' && typeof (x as { $col: unknown }).$col === 'number';
};

/**
 * Collects panels (each once, by fingerprint) and their distinct columns. `shareColumns:
 * false` stores every series as its own column without looking for equal ones (no digest
 * per column: for a single panel, e.g. the store's panel cache, src-main/data/panel-cache.ts).
 */
export class SnapshotWriter {
  constructor(private readonly opts: { shareColumns?: boolean } = {}) {}

  private readonly panels: SnapshotPanel[] = [];
  private readonly seen = new Set<string>();
  private readonly byColumn = new Map<string, number>();
  private readonly chunks: Uint8Array[] = [];
  private readonly columns: { offset: number; length: number }[] = [];
  private values = 0;

  private column(values: Float64Array): number {
    const bytes = columnBytes(values);
    const key = this.opts.shareColumns === false ? null : `${values.length}:${toHex(new Sha256().update(bytes).digest())}`;
    const hit = key === null ? undefined : this.byColumn.get(key);
    if (hit !== undefined) return hit;
    const id = this.columns.length;
    this.columns.push({ offset: this.values, length: values.length });
    this.chunks.push(bytes);
    this.values += values.length;
    if (key !== null) this.byColumn.set(key, id);
    return id;
  }

  /** The panel's tree with each series replaced by a column reference (any field, present or future). */
  private encode(x: unknown): unknown {
    if (x instanceof Float64Array) return { $col: this.column(x) };
    if (Array.isArray(x)) return x.map((v) => this.encode(v));
    if (x !== null && typeof x === 'object') {
      const out: Record<string, unknown> = {};
      for (const [k, v] of Object.entries(x)) if (v !== undefined) out[k] = this.encode(v);
      return out;
    }
    return x;
  }

  /** Adds a panel (once per fingerprint); returns its fingerprint. */
  add(panel: ReturnsPanel, fingerprint: PanelFingerprint = fingerprintPanel(panel)): PanelFingerprint {
    if (this.seen.has(fingerprint.sha256)) return fingerprint;
    this.seen.add(fingerprint.sha256);
    this.panels.push({ fingerprint, panel: this.encode(panel) });
    return fingerprint;
  }

  get panelCount(): number {
    return this.panels.length;
  }

  /** The index (exact JSON text: shared/records/exact-json.ts) and the column bytes. */
  finish(): { index: string; columns: Uint8Array } {
    const bytes = new Uint8Array(this.values * 8);
    let at = 0;
    for (const c of this.chunks) {
      bytes.set(c, at);
      at += c.length;
    }
    const index: SnapshotIndex = { format: SNAPSHOT_FORMAT, version: SNAPSHOT_VERSION, columns: this.columns, panels: this.panels };
    return { index: stringifyExact(index), columns: bytes };
  }
}

function broken(what: string): DeflatorError {
  return new DeflatorError('INPUT_INVALID', `the panel snapshot is damaged: ${what}`, 'plan the batch again (deflator batch plan) or copy the folder again from where it was planned');
}

/**
 * Rebuilds every panel of a snapshot (the index as written by finish) and checks each against
 * its fingerprint. `trusted`: the fingerprints are taken as stored, not computed again (the
 * store's panel cache, which trusts its database as the packed series do).
 */
export function readSnapshot(indexText: string, columns: Uint8Array, opts: { trusted?: boolean } = {}): Map<string, ReturnsPanel> {
  let index: SnapshotIndex;
  try {
    index = parseExact<SnapshotIndex>(indexText);
  } catch (e) {
    throw broken(`its index is not valid JSON (${(e as Error).message})`);
  }
  if (index.format !== SNAPSHOT_FORMAT || index.version !== SNAPSHOT_VERSION) {
    throw broken(`format "${String(index.format)}" version ${String(index.version)} is not ${SNAPSHOT_FORMAT} ${SNAPSHOT_VERSION}`);
  }
  const view = new DataView(columns.buffer, columns.byteOffset, columns.byteLength);
  const read = (id: number): Float64Array => {
    const c = index.columns[id];
    if (!c || (c.offset + c.length) * 8 > columns.byteLength) throw broken(`column ${id} is missing or of the wrong length`);
    // a copy (aligned, and the caller's bytes may belong to a database row or a file buffer);
    // Uint8Array's own slice: a Node Buffer's slice is a view into the whole pool
    if (LITTLE_ENDIAN) return new Float64Array(Uint8Array.prototype.slice.call(columns, c.offset * 8, (c.offset + c.length) * 8).buffer);
    const out = new Float64Array(c.length);
    for (let t = 0; t < c.length; t++) out[t] = view.getFloat64((c.offset + t) * 8, true);
    return out;
  };
  const decode = (x: unknown): unknown => {
    if (isColumnRef(x)) return read(x.$col);
    if (Array.isArray(x)) return x.map(decode);
    if (x !== null && typeof x === 'object') {
      const out: Record<string, unknown> = {};
      for (const [k, v] of Object.entries(x)) out[k] = decode(v);
      return out;
    }
    return x;
  };
  const out = new Map<string, ReturnsPanel>();
  for (const p of index.panels) {
    const panel = decode(p.panel) as ReturnsPanel;
    if (opts.trusted) {
      out.set(p.fingerprint.sha256, panel);
      continue;
    }
    let fp: PanelFingerprint;
    try {
      fp = fingerprintPanel(panel);
    } catch (e) {
      throw broken(`panel ${p.fingerprint.sha256.slice(0, 12)} does not rebuild (${(e as Error).message})`);
    }
    if (fp.sha256 !== p.fingerprint.sha256) throw broken(`panel ${p.fingerprint.sha256.slice(0, 12)} rebuilds with fingerprint ${fp.sha256.slice(0, 12)}`);
    out.set(fp.sha256, panel);
  }
  return out;
}

/** The data fingerprint of a batch: SHA-256 of its distinct panels' fingerprints, sorted, one per line. */
export function dataFingerprint(panelSha256: string[]): string {
  return sha256Hex([...new Set(panelSha256)].sort().join('\n'));
}
