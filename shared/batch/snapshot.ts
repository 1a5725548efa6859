/**
 * A snapshot of the returns panels a batch needs, so that shards read one folder and
 * never the project database. Two parts:
 *
 *   columns: every distinct series (asset returns, factors, risk-free, consumption
 *            growth) once, as float64 little-endian, one after another (columns.f64);
 *   index:   JSON (panels.json): per column its offset and length in values; per panel
 *            its fingerprint, frequency, return kind, period labels, asset and factor
 *            names, sample notes, and the column numbers of its series.
 *
 * Panels of a factor-subset grid share most of their series, so a column shared by
 * several panels is stored once. Reading rebuilds every panel and checks its
 * fingerprint (shared/records/panel-encoding.ts) against the index: a damaged or
 * edited snapshot is refused, never estimated on.
 */
import { DeflatorError } from '../errors.js';
import type { ReturnsPanel, SampleNote } from '../panel.js';
import { fingerprintPanel } from '../records/panel-encoding.js';
import type { PanelFingerprint } from '../records/run-record.js';
import { Sha256, sha256Hex, toHex } from '../records/sha256.js';

export const SNAPSHOT_FORMAT = 'deflator panel snapshot';
export const SNAPSHOT_VERSION = 1;

export interface SnapshotPanel {
  fingerprint: PanelFingerprint;
  frequency: ReturnsPanel['frequency'];
  returnKind: ReturnsPanel['returnKind'];
  periods: string[];
  assets: string[];
  factors: string[];
  sampleNotes: SampleNote[];
  /** Column numbers: one per asset, one per factor, then the optional series. */
  returns: number[];
  factorColumns: number[];
  riskfreeGross?: number;
  consumptionGrowth?: number;
}

export interface SnapshotIndex {
  format: typeof SNAPSHOT_FORMAT;
  version: number;
  /** Offset (in values, not bytes) and length of each column in the columns file. */
  columns: { offset: number; length: number }[];
  panels: SnapshotPanel[];
}

function columnBytes(values: Float64Array): Uint8Array {
  const out = new Uint8Array(values.length * 8);
  const view = new DataView(out.buffer);
  for (let i = 0; i < values.length; i++) view.setFloat64(i * 8, values[i], true);
  return out;
}

/** Collects panels (each once, by fingerprint) and their distinct columns. */
export class SnapshotWriter {
  private readonly panels: SnapshotPanel[] = [];
  private readonly byPanel = new Map<string, SnapshotPanel>();
  private readonly byColumn = new Map<string, number>();
  private readonly chunks: Uint8Array[] = [];
  private readonly columns: { offset: number; length: number }[] = [];
  private values = 0;

  private column(values: Float64Array): number {
    const bytes = columnBytes(values);
    const key = `${values.length}:${toHex(new Sha256().update(bytes).digest())}`;
    const hit = this.byColumn.get(key);
    if (hit !== undefined) return hit;
    const id = this.columns.length;
    this.columns.push({ offset: this.values, length: values.length });
    this.chunks.push(bytes);
    this.values += values.length;
    this.byColumn.set(key, id);
    return id;
  }

  /** Adds a panel (once per fingerprint); returns its fingerprint. */
  add(panel: ReturnsPanel, fingerprint: PanelFingerprint = fingerprintPanel(panel)): PanelFingerprint {
    if (this.byPanel.has(fingerprint.sha256)) return fingerprint;
    const entry: SnapshotPanel = {
      fingerprint,
      frequency: panel.frequency,
      returnKind: panel.returnKind,
      periods: panel.periods,
      assets: panel.assets,
      factors: panel.factors.map((f) => f.name),
      sampleNotes: panel.sampleNotes,
      returns: panel.returns.map((r) => this.column(r)),
      factorColumns: panel.factors.map((f) => this.column(f.values)),
    };
    if (panel.riskfreeGross) entry.riskfreeGross = this.column(panel.riskfreeGross);
    if (panel.consumptionGrowth) entry.consumptionGrowth = this.column(panel.consumptionGrowth);
    this.panels.push(entry);
    this.byPanel.set(fingerprint.sha256, entry);
    return fingerprint;
  }

  get panelCount(): number {
    return this.panels.length;
  }

  /** The index (JSON) and the column bytes. */
  finish(): { index: SnapshotIndex; columns: Uint8Array } {
    const bytes = new Uint8Array(this.values * 8);
    let at = 0;
    for (const c of this.chunks) {
      bytes.set(c, at);
      at += c.length;
    }
    return { index: { format: SNAPSHOT_FORMAT, version: SNAPSHOT_VERSION, columns: this.columns, panels: this.panels }, columns: bytes };
  }
}

function broken(what: string): DeflatorError {
  return new DeflatorError('INPUT_INVALID', `the panel snapshot is damaged: ${what}`, 'plan the batch again (deflator batch plan) or copy the folder again from where it was planned');
}

/** Rebuilds every panel of a snapshot and checks each against its fingerprint. */
export function readSnapshot(index: SnapshotIndex, columns: Uint8Array): Map<string, ReturnsPanel> {
  if (index.format !== SNAPSHOT_FORMAT || index.version !== SNAPSHOT_VERSION) {
    throw broken(`format "${String(index.format)}" version ${String(index.version)} is not ${SNAPSHOT_FORMAT} ${SNAPSHOT_VERSION}`);
  }
  const view = new DataView(columns.buffer, columns.byteOffset, columns.byteLength);
  const read = (id: number, T: number): Float64Array => {
    const c = index.columns[id];
    if (!c || c.length !== T || (c.offset + c.length) * 8 > columns.byteLength) throw broken(`column ${id} is missing or of the wrong length`);
    const out = new Float64Array(T);
    for (let t = 0; t < T; t++) out[t] = view.getFloat64((c.offset + t) * 8, true);
    return out;
  };
  const out = new Map<string, ReturnsPanel>();
  for (const p of index.panels) {
    const T = p.periods.length;
    if (p.returns.length !== p.assets.length || p.factorColumns.length !== p.factors.length) throw broken(`panel ${p.fingerprint.sha256.slice(0, 12)} lists ${p.assets.length} assets and ${p.returns.length} return columns`);
    const panel: ReturnsPanel = {
      frequency: p.frequency,
      periods: p.periods,
      assets: p.assets,
      returnKind: p.returnKind,
      returns: p.returns.map((id) => read(id, T)),
      factors: p.factors.map((name, k) => ({ name, values: read(p.factorColumns[k], T) })),
      sampleNotes: p.sampleNotes,
    };
    if (p.riskfreeGross !== undefined) panel.riskfreeGross = read(p.riskfreeGross, T);
    if (p.consumptionGrowth !== undefined) panel.consumptionGrowth = read(p.consumptionGrowth, T);
    const fp = fingerprintPanel(panel);
    if (fp.sha256 !== p.fingerprint.sha256) throw broken(`panel ${p.fingerprint.sha256.slice(0, 12)} rebuilds with fingerprint ${fp.sha256.slice(0, 12)}`);
    out.set(fp.sha256, panel);
  }
  return out;
}

/** The data fingerprint of a batch: SHA-256 of its distinct panels' fingerprints, sorted, one per line. */
export function dataFingerprint(panelSha256: string[]): string {
  return sha256Hex([...new Set(panelSha256)].sort().join('\n'));
}
