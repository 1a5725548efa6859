/**
 * Which stored data a run read, and a digest of it: the subjects (assets, series,
 * portfolios) named by the spec or present in the panel, each with a SHA-256 of its
 * stored rows, and the imported files (from the import log, through each row's
 * import_id) that fed them. Recomputing the same digests later tells whether a run's
 * data has changed since (re-imported, replaced or deleted): the run is then stale.
 */
import { createHash } from 'node:crypto';
import type { ReturnsPanel } from '../../shared/panel.js';
import type { DataFileFingerprint, SubjectFingerprint } from '../../shared/records/run-record.js';
import type { Store } from '../store/store.js';

export type SubjectKind = SubjectFingerprint['kind'];

export interface SubjectRef {
  kind: SubjectKind;
  name: string;
}

const asRecord = (x: unknown): Record<string, unknown> => (x !== null && typeof x === 'object' ? (x as Record<string, unknown>) : {});
const strings = (x: unknown): string[] => (Array.isArray(x) ? x.filter((v): v is string => typeof v === 'string') : []);

/** Series names a fit or comparison spec reads: factors, risk-free, consumption (of every compared model). */
export function specSeriesNames(spec: unknown): string[] {
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

/** Asset (or portfolio) names a spec asks for explicitly; [] for "all". */
export function specAssetNames(spec: unknown): string[] {
  return strings(asRecord(spec).assets);
}

/**
 * The subjects of a run: its spec's named assets (every stored asset and portfolio when
 * the spec says "all", including those alignment later dropped), the panels' assets,
 * and the spec's series. Names resolve to asset, then portfolio; series by name.
 */
export function runSubjects(store: Store, spec: unknown, panels: ReturnsPanel[]): SubjectRef[] {
  const db = store.db;
  const isAsset = db.prepare('SELECT 1 FROM asset WHERE name = ?').pluck();
  const isPortfolio = db.prepare('SELECT 1 FROM portfolio WHERE name = ?').pluck();
  const isSeries = db.prepare('SELECT 1 FROM series WHERE name = ?').pluck();
  const out = new Map<string, SubjectRef>();
  const add = (kind: SubjectKind, name: string) => out.set(`${kind}\u0000${name}`, { kind, name });
  const explicit = specAssetNames(spec);
  const assetNames = explicit.length ? explicit : store.assets();
  for (const p of panels) assetNames.push(...p.assets);
  for (const name of assetNames) {
    if (isAsset.get(name) !== undefined) add('asset', name);
    else if (isPortfolio.get(name) !== undefined) add('portfolio', name);
  }
  const seriesNames = specSeriesNames(spec);
  for (const p of panels) for (const f of p.factors) seriesNames.push(f.name);
  for (const name of seriesNames) if (isSeries.get(name) !== undefined) add('series', name);
  return [...out.values()].sort((a, b) => (a.kind === b.kind ? (a.name < b.name ? -1 : a.name > b.name ? 1 : 0) : a.kind < b.kind ? -1 : 1));
}

/** Reads subjects' digests and feeding files; caches per subject for one listing. */
export class DataFingerprinter {
  private readonly cache = new Map<string, SubjectFingerprint | null>();
  private readonly st;

  constructor(private readonly store: Store) {
    const db = store.db;
    this.st = {
      assetId: db.prepare('SELECT id FROM asset WHERE name = ?').pluck(),
      seriesId: db.prepare('SELECT id FROM series WHERE name = ?').pluck(),
      portfolioId: db.prepare('SELECT id FROM portfolio WHERE name = ?').pluck(),
      assetRows: db.prepare('SELECT date, price, dividend, adjust, shares FROM observation WHERE asset_id = ? ORDER BY date').raw(),
      seriesRows: db.prepare('SELECT date, value FROM series_observation WHERE series_id = ? ORDER BY date').raw(),
      portfolioRows: db.prepare('SELECT period, net FROM portfolio_return WHERE portfolio_id = ? ORDER BY period').raw(),
      assetFiles: db.prepare(
        'SELECT l.id, l.file_name, l.sha256 FROM import_log l WHERE l.id IN (SELECT DISTINCT import_id FROM observation WHERE asset_id = ?) ORDER BY l.id',
      ),
      seriesFiles: db.prepare(
        'SELECT l.id, l.file_name, l.sha256 FROM import_log l WHERE l.id IN (SELECT DISTINCT import_id FROM series_observation WHERE series_id = ?) ORDER BY l.id',
      ),
    };
  }

  private id(ref: SubjectRef): number | undefined {
    const st = ref.kind === 'asset' ? this.st.assetId : ref.kind === 'series' ? this.st.seriesId : this.st.portfolioId;
    return st.get(ref.name) as number | undefined;
  }

  /**
   * SHA-256 over a subject's stored rows, in date order. Per row: the date as u32 length
   * + UTF-8, then float64 little-endian values: asset (price, dividend, adjust, a u8 flag
   * and shares when present), series (value), portfolio (a u8 flag and net when present).
   * Prefixed by kind and name. null when the subject is no longer stored.
   */
  subject(ref: SubjectRef): SubjectFingerprint | null {
    const key = `${ref.kind}\u0000${ref.name}`;
    if (this.cache.has(key)) return this.cache.get(key)!;
    const id = this.id(ref);
    let fp: SubjectFingerprint | null = null;
    if (id !== undefined) {
      const h = createHash('sha256');
      const str = (s: string) => {
        const b = Buffer.from(s, 'utf8');
        const n = Buffer.alloc(4);
        n.writeUInt32LE(b.length);
        h.update(n).update(b);
      };
      const f = Buffer.alloc(8);
      const num = (x: number) => {
        f.writeDoubleLE(x);
        h.update(f);
      };
      const flag = (on: boolean) => h.update(Buffer.from([on ? 1 : 0]));
      str(ref.kind);
      str(ref.name);
      let rows = 0;
      if (ref.kind === 'asset') {
        for (const [d, p, dv, a, sh] of this.st.assetRows.iterate(id) as Iterable<[string, number, number, number, number | null]>) {
          str(d);
          num(p);
          num(dv);
          num(a);
          flag(sh !== null);
          if (sh !== null) num(sh);
          rows++;
        }
      } else if (ref.kind === 'series') {
        for (const [d, v] of this.st.seriesRows.iterate(id) as Iterable<[string, number]>) {
          str(d);
          num(v);
          rows++;
        }
      } else {
        for (const [d, v] of this.st.portfolioRows.iterate(id) as Iterable<[string, number | null]>) {
          str(d);
          flag(v !== null);
          if (v !== null) num(v);
          rows++;
        }
      }
      fp = { kind: ref.kind, name: ref.name, sha256: h.digest('hex'), rows };
    }
    this.cache.set(key, fp);
    return fp;
  }

  /** Imported files feeding these subjects (portfolios have none: they are built, not imported). */
  files(refs: SubjectRef[]): DataFileFingerprint[] {
    const byImport = new Map<number, DataFileFingerprint>();
    for (const ref of refs) {
      if (ref.kind === 'portfolio') continue;
      const id = this.id(ref);
      if (id === undefined) continue;
      const st = ref.kind === 'asset' ? this.st.assetFiles : this.st.seriesFiles;
      for (const row of st.all(id) as { id: number; file_name: string; sha256: string }[]) {
        const f = byImport.get(row.id) ?? { file: row.file_name, sha256: row.sha256, importId: row.id, subjects: [] };
        f.subjects.push(ref.name);
        byImport.set(row.id, f);
      }
    }
    return [...byImport.values()].sort((a, b) => (a.importId ?? 0) - (b.importId ?? 0));
  }
}
