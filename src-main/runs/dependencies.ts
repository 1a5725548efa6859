/**
 * Which stored data a run read, and a digest of it: the subjects (assets, series,
 * portfolios) named by the spec or present in the panel, each with a SHA-256 of its
 * stored rows, and the imported files (from the import log, through each row's
 * import_id) that fed them. Recomputing the same digests later tells whether a run's
 * data has changed since (re-imported, replaced or deleted): the run is then stale.
 */
import { isReturnHistory, type NamedSeries, type ReturnForm, type ReturnSeries, type StoredAsset, type ValueUnits } from '../../shared/data.js';
import type { ReturnsPanel } from '../../shared/panel.js';
import { gridNames, isGridSpec, type GridSpec } from '../../shared/batch/grid.js';
import type { DataFileFingerprint, SubjectFingerprint } from '../../shared/records/run-record.js';
import type { Store } from '../store/store.js';
import { sha256Hasher } from '../store/digest.js';
import { preparedOnUse } from '../store/sqlite.js';

export type SubjectKind = SubjectFingerprint['kind'];

export interface SubjectRef {
  kind: SubjectKind;
  name: string;
}

const asRecord = (x: unknown): Record<string, unknown> => (x !== null && typeof x === 'object' ? (x as Record<string, unknown>) : {});
const strings = (x: unknown): string[] => (Array.isArray(x) ? x.filter((v): v is string => typeof v === 'string') : []);

/** Series names a fit or comparison spec reads: factors, risk-free, consumption (of every compared model or grid task). */
export function specSeriesNames(spec: unknown): string[] {
  if (isGridSpec(spec)) return gridNames(spec as GridSpec).series;
  const s = asRecord(spec);
  const names = new Set<string>();
  const model = (m: unknown) => {
    const o = asRecord(m);
    for (const f of strings(o.factors)) names.add(f);
    if (typeof o.consumption === 'string') names.add(o.consumption);
  };
  if (typeof s.riskfree === 'string') names.add(s.riskfree);
  model(s.model);
  if (Array.isArray(s.compare)) for (const e of s.compare) model(asRecord(e).model);
  return [...names];
}

/** Asset (or portfolio) names a spec asks for explicitly (`assets`, or the one `asset` of a present-value spec); [] for "all". */
export function specAssetNames(spec: unknown): string[] {
  if (isGridSpec(spec)) {
    const a = gridNames(spec as GridSpec).assets;
    return a === 'all' ? [] : a;
  }
  const s = asRecord(spec);
  return typeof s.asset === 'string' ? [s.asset] : strings(s.assets);
}

/**
 * The subjects of a run: its spec's named assets (every stored asset and portfolio when
 * the spec says "all", including those alignment later dropped), the panels' assets,
 * and the spec's series. Names resolve to asset, then portfolio; series by name.
 */
export function runSubjects(store: Store, spec: unknown, panels: ReturnsPanel[], loaded: readonly SubjectFingerprint[] = []): SubjectRef[] {
  const st = preparedOnUse(store.db, {
    isAsset: (d) => d.prepare('SELECT 1 FROM asset WHERE name = ?').pluck(),
    isPortfolio: (d) => d.prepare('SELECT 1 FROM portfolio WHERE name = ?').pluck(),
    isSeries: (d) => d.prepare('SELECT 1 FROM series WHERE name = ?').pluck(),
  });
  // subjects the panel load read (with their digests) are known to be stored, and as what
  const seen = new Set(loaded.map((x) => `${x.kind}\u0000${x.name}`));
  const was = (kind: SubjectKind, name: string) => seen.has(`${kind}\u0000${name}`);
  const out = new Map<string, SubjectRef>();
  const add = (kind: SubjectKind, name: string) => out.set(`${kind}\u0000${name}`, { kind, name });
  const explicit = specAssetNames(spec);
  const assetNames = explicit.length ? explicit : store.assets();
  for (const p of panels) assetNames.push(...p.assets);
  for (const name of assetNames) {
    if (was('asset', name) || st.isAsset.get(name) !== undefined) add('asset', name);
    else if (was('portfolio', name) || st.isPortfolio.get(name) !== undefined) add('portfolio', name);
  }
  const seriesNames = specSeriesNames(spec);
  for (const p of panels) for (const f of p.factors) seriesNames.push(f.name);
  for (const name of seriesNames) if (was('series', name) || st.isSeries.get(name) !== undefined) add('series', name);
  return [...out.values()].sort((a, b) => (a.kind === b.kind ? (a.name < b.name ? -1 : a.name > b.name ? 1 : 0) : a.kind < b.kind ? -1 : 1));
}

/** Reads subjects' digests and feeding files; caches per subject for one listing. */
export class DataFingerprinter {
  private readonly cache = new Map<string, SubjectFingerprint | null>();
  private readonly st;

  constructor(
    private readonly store: Store,
    known: readonly SubjectFingerprint[] = [],
  ) {
    for (const k of known) this.cache.set(`${k.kind}\u0000${k.name}`, k);
    // each statement prepared on first use: a run record whose subjects came with their digests
    // (from the panel load) uses three of the thirteen
    this.st = preparedOnUse(store.db, {
      assetId: (d) => d.prepare('SELECT id FROM asset WHERE name = ?').pluck(),
      seriesId: (d) => d.prepare('SELECT id FROM series WHERE name = ?').pluck(),
      portfolioId: (d) => d.prepare('SELECT id FROM portfolio WHERE name = ?').pluck(),
      assetRows: (d) => d.prepare('SELECT date, price, dividend, adjust, shares FROM observation WHERE asset_id = ? ORDER BY date').raw(),
      assetForm: (d) => d.prepare('SELECT form, units, excess FROM asset WHERE id = ?').raw(),
      returnRows: (d) => d.prepare('SELECT date, value FROM return_observation WHERE asset_id = ? ORDER BY date').raw(),
      seriesRows: (d) => d.prepare('SELECT date, value FROM series_observation WHERE series_id = ? ORDER BY date').raw(),
      portfolioRows: (d) => d.prepare('SELECT period, net FROM portfolio_return WHERE portfolio_id = ? ORDER BY period').raw(),
      assetFiles: (d) =>
        d.prepare(
          'SELECT l.id, l.file_name, l.sha256 FROM import_log l WHERE l.id IN (SELECT import_id FROM observation WHERE asset_id = $id UNION SELECT import_id FROM return_observation WHERE asset_id = $id) ORDER BY l.id',
        ),
      assetPackImports: (d) =>
        d.prepare("SELECT a.name, p.imports FROM asset a JOIN subject_pack p ON p.kind = 'asset' AND p.subject_id = a.id WHERE a.name IN (SELECT value FROM json_each(?))").raw(),
      seriesPackImports: (d) =>
        d.prepare("SELECT s.name, p.imports FROM series s JOIN subject_pack p ON p.kind = 'series' AND p.subject_id = s.id WHERE s.name IN (SELECT value FROM json_each(?))").raw(),
      logEntries: (d) => d.prepare('SELECT id, file_name, sha256 FROM import_log WHERE id IN (SELECT value FROM json_each(?))'),
      seriesFiles: (d) =>
        d.prepare(
          'SELECT l.id, l.file_name, l.sha256 FROM import_log l WHERE l.id IN (SELECT DISTINCT import_id FROM series_observation WHERE series_id = ?) ORDER BY l.id',
        ),
    });
  }

  private id(ref: SubjectRef): number | undefined {
    const st = ref.kind === 'asset' ? this.st.assetId : ref.kind === 'series' ? this.st.seriesId : this.st.portfolioId;
    return st.get(ref.name) as number | undefined;
  }

  /**
   * The subject's digest (`subjectDigest`) from its stored rows; null when the subject is
   * no longer stored. Digests given to the constructor (computed by the panel load from
   * the rows it read, src-main/services) are used as they are.
   */
  subject(ref: SubjectRef): SubjectFingerprint | null {
    const key = `${ref.kind}\u0000${ref.name}`;
    if (this.cache.has(key)) return this.cache.get(key)!;
    const id = this.id(ref);
    let fp: SubjectFingerprint | null = null;
    if (id !== undefined) {
      const form = ref.kind === 'asset' ? (this.st.assetForm.get(id) as [ReturnForm | null, ValueUnits | null, number | null] | undefined) : undefined;
      const packed = form?.[0] === null || ref.kind === 'series' ? this.store.packs.digest(ref.kind === 'series' ? 'series' : 'asset', id) : undefined;
      if (packed) {
        // the digest stored with the subject's pack: current whenever the pack exists (store/packs.ts)
        fp = { kind: ref.kind, name: ref.name, sha256: packed.sha256, rows: packed.rows };
      } else if (form && form[0] !== null) {
        const rows = this.st.returnRows.all(id) as [string, number | null][];
        fp = subjectDigest(returnRows(ref.name, { form: form[0], units: form[1] ?? 'decimal', excess: form[2] === 1 }, rows.map((r) => r[0]), rows.map((r) => r[1])));
      } else if (ref.kind === 'asset') {
        const rows = this.st.assetRows.all(id) as [string, number, number, number, number | null][];
        fp = subjectDigest({ kind: 'asset', name: ref.name, dates: rows.map((r) => r[0]), values: [rows.map((r) => r[1]), rows.map((r) => r[2]), rows.map((r) => r[3])], optional: rows.map((r) => r[4]) });
      } else if (ref.kind === 'series') {
        const rows = this.st.seriesRows.all(id) as [string, number][];
        fp = subjectDigest({ kind: 'series', name: ref.name, dates: rows.map((r) => r[0]), values: [rows.map((r) => r[1])] });
      } else {
        const rows = this.st.portfolioRows.all(id) as [string, number | null][];
        fp = subjectDigest({ kind: 'portfolio', name: ref.name, dates: rows.map((r) => r[0]), values: [], optional: rows.map((r) => r[1]) });
      }
    }
    this.cache.set(key, fp);
    return fp;
  }

  /** Imported files feeding these subjects (portfolios have none: they are built, not imported). */
  files(refs: SubjectRef[]): DataFileFingerprint[] {
    const byImport = new Map<number, DataFileFingerprint>();
    // a packed subject knows its imports (store/packs.ts): read for all the subjects at once,
    // with their import-log entries; the others' rows are scanned
    const names = (kind: SubjectKind) => JSON.stringify(refs.filter((r) => r.kind === kind).map((r) => r.name));
    const packed = new Map<string, number[]>();
    for (const [kind, st] of [['asset', this.st.assetPackImports], ['series', this.st.seriesPackImports]] as const) {
      for (const [name, imports] of st.all(names(kind)) as [string, string][]) packed.set(`${kind}\u0000${name}`, JSON.parse(imports) as number[]);
    }
    const ids = new Set<number>();
    for (const list of packed.values()) for (const i of list) ids.add(i);
    const log = new Map<number, { id: number; file_name: string; sha256: string }>();
    for (const row of this.st.logEntries.all(JSON.stringify([...ids])) as { id: number; file_name: string; sha256: string }[]) log.set(row.id, row);
    for (const ref of refs) {
      if (ref.kind === 'portfolio') continue;
      const known = packed.get(`${ref.kind}\u0000${ref.name}`);
      let rows: unknown[];
      if (known) rows = known.map((i) => log.get(i)).filter((r) => r !== undefined);
      else {
        const id = this.id(ref);
        if (id === undefined) continue;
        rows = ref.kind === 'asset' ? this.st.assetFiles.all({ id }) : this.st.seriesFiles.all(id);
      }
      for (const row of rows as { id: number; file_name: string; sha256: string }[]) {
        const f = byImport.get(row.id) ?? { file: row.file_name, sha256: row.sha256, importId: row.id, subjects: [] };
        f.subjects.push(ref.name);
        byImport.set(row.id, f);
      }
    }
    return [...byImport.values()].sort((a, b) => (a.importId ?? 0) - (b.importId ?? 0));
  }
}

/** One subject's stored rows, column by column, for its digest. */
export interface SubjectRows {
  kind: SubjectKind;
  name: string;
  /** Dates (assets, series) or periods (portfolios), ascending. */
  dates: readonly string[];
  /** The always-present values per row: asset price, dividend, adjust; series value; none for portfolios. */
  values: readonly ArrayLike<number>[];
  /** The optional value per row (asset shares, portfolio net, a stored return): null (or NaN) when absent. */
  optional?: ArrayLike<number | null>;
  /** Hashed after the name: how an asset stored as returns is written ("returns", form, units, "excess" or "total"). */
  prefix?: readonly string[];
}

/** An asset stored as returns, for its digest: its form, units and excess flag, then each date and return (absent where missing). */
export function returnRows(name: string, meta: { form: ReturnForm; units: ValueUnits; excess: boolean }, dates: readonly string[], values: ArrayLike<number | null>): SubjectRows {
  return { kind: 'asset', name, prefix: ['returns', meta.form, meta.units, meta.excess ? 'excess' : 'total'], dates, values: [], optional: values };
}

/**
 * SHA-256 over a subject's stored rows, in date order. Per row: the date as u32 length +
 * UTF-8, then float64 little-endian values: asset (price, dividend, adjust, a u8 flag and
 * shares when present), series (value), portfolio (a u8 flag and net when present).
 * Prefixed by kind and name (each as u32 length + UTF-8); an asset stored as returns also by
 * "returns", its form, units and "excess" or "total", and its rows hash a u8 flag and the
 * stored value when present. The bytes are laid out in one
 * buffer per subject and hashed once.
 */
export function subjectDigest(s: SubjectRows): SubjectFingerprint {
  const n = s.dates.length;
  const present = (i: number): boolean => {
    const v = s.optional?.[i];
    return v !== undefined && v !== null && !Number.isNaN(v);
  };
  let size = 8 + Buffer.byteLength(s.kind) + Buffer.byteLength(s.name);
  for (const p of s.prefix ?? []) size += 4 + Buffer.byteLength(p);
  for (let i = 0; i < n; i++) size += 4 + Buffer.byteLength(s.dates[i]) + 8 * s.values.length + (s.optional ? (present(i) ? 9 : 1) : 0);
  const buf = Buffer.allocUnsafe(size);
  let o = 0;
  const str = (t: string) => {
    const len = buf.write(t, o + 4, 'utf8');
    buf.writeUInt32LE(len, o);
    o += 4 + len;
  };
  str(s.kind);
  str(s.name);
  for (const p of s.prefix ?? []) str(p);
  for (let i = 0; i < n; i++) {
    str(s.dates[i]);
    for (const col of s.values) o = buf.writeDoubleLE(col[i], o);
    if (s.optional) {
      const on = present(i);
      buf[o++] = on ? 1 : 0;
      if (on) o = buf.writeDoubleLE(s.optional[i] as number, o);
    }
  }
  return { kind: s.kind, name: s.name, sha256: sha256Hasher().update(buf.subarray(0, o)).digest('hex'), rows: n };
}

/** Digests of what a panel load read (src-main/data/panel.ts loadPanelInput), without reading the store again. */
export function loadedDigests(
  input: { histories: readonly StoredAsset[]; series: readonly NamedSeries[]; portfolios?: readonly ReturnSeries[] },
  known: (loaded: object) => SubjectFingerprint | undefined = () => undefined,
): SubjectFingerprint[] {
  const out: SubjectFingerprint[] = [];
  for (const h of input.histories) {
    const k = known(h);
    if (k) {
      out.push(k);
      continue;
    }
    if (isReturnHistory(h)) {
      out.push(subjectDigest(returnRows(h.asset, h, h.dates, h.values)));
      continue;
    }
    const n = h.dates.length;
    out.push(subjectDigest({ kind: 'asset', name: h.asset, dates: h.dates, values: [h.price, h.dividend, h.adjust ?? new Float64Array(n).fill(1)], optional: h.shares ?? new Float64Array(n).fill(NaN) }));
  }
  for (const x of input.series) out.push(known(x) ?? subjectDigest({ kind: 'series', name: x.name, dates: x.dates, values: [x.values] }));
  for (const p of input.portfolios ?? []) out.push(subjectDigest({ kind: 'portfolio', name: p.name, dates: p.periods, values: [], optional: p.net }));
  return out;
}

