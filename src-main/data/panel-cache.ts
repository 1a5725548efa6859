/**
 * The panel cache: returns panels as built, kept in the project database (table
 * panel_cache, schema 8) under a key naming everything a panel came from, so that a fit,
 * back-test or comparison on data and settings seen before reads its panel as one blob
 * instead of building it again (the demo fit: about 45 ms of a cold process; a daily panel
 * of 100 assets over 10,000 days: about 0.6 s).
 *
 * The key is the text (JSON) naming: the spec's panel keys (frequency, window, assets, return kind,
 * risk-free and its day count, factors, consumption, instruments), whether price ratios
 * were asked for, every subject read (each price history and series by name, with the digest
 * of its stored rows and, for a series, its stored kind and risk-free form), and the build of
 * the program (`__DEFLATOR_SOURCE_ID__`, a digest of the sources scripts/build.mjs bundles,
 * so that any change to the code, released or not, starts afresh).
 *
 * Guarantees. The keyed rows stay the truth, as for the packed series (src-main/store/
 * packs.ts), whose digests the key uses:
 * - The lookup reads the subjects' pack digests and the cache row in one read transaction;
 *   a subject without a pack (just imported, or changed), a portfolio or an asset stored as
 *   returns makes it a miss, and the panel is built from the rows as before.
 * - An entry is stored under the digests of the data it was built from (the load's own),
 *   never of data read later: what a key names is exactly what its panel holds.
 * - Every write to a packed subject drops its pack (packs.ts), and a trigger on the packs
 *   then clears the whole cache in the same transaction; at most MAX_ENTRIES panels are kept.
 * - Storing is best effort: a read-only database, another writer holding the lock (no wait)
 *   or a full disk leave the cache as it was, and the run goes on with the panel it built.
 * - Replay never reads it (src-main/runs/replay.ts rebuilds the panel from the rows).
 * The stored panel carries its fingerprint and the subjects' digests, so the run record
 * neither encodes nor hashes the panel again; a hit is not hashed again either (the database
 * is trusted here as it is for the packs; replay checks a run's panel against its rows).
 */
import type Database from 'better-sqlite3';
import { readSnapshot, SnapshotWriter } from '../../shared/batch/snapshot.js';
import type { ReturnsPanel } from '../../shared/panel.js';
import { fingerprintPanel } from '../../shared/records/panel-encoding.js';
import type { PanelFingerprint, SubjectFingerprint } from '../../shared/records/run-record.js';
import { isReturnHistory } from '../../shared/data.js';
import type { BuildPanelInput, PanelSpec } from '../../shared/returns/index.js';
import { nodeSha256 } from '../store/digest.js';
import type { Store } from '../store/store.js';

declare const __DEFLATOR_SOURCE_ID__: string | undefined;

/** Panels kept at most (the oldest go first). */
export const MAX_ENTRIES = 16;
/** Layout of the key and the stored entry; change it when either changes. */
const LAYOUT = 3;

let identity: string | null = typeof __DEFLATOR_SOURCE_ID__ === 'string' ? __DEFLATOR_SOURCE_ID__ : null;

/**
 * The build identity keys are made with. Bundles have one (scripts/build.mjs); code run from
 * its sources (tests) has none and does not use the cache, unless a test names one here.
 */
export function setPanelCacheIdentity(id: string | null): void {
  identity = id;
}

/** What a cached panel brings: the panel, its fingerprint and the digests of the subjects it came from. */
export interface CachedPanel {
  panel: ReturnsPanel;
  fingerprint: PanelFingerprint;
  subjects: SubjectFingerprint[];
}

/** A subject as the key names it: kind, name, digest, rows; a series adds its stored kind and risk-free form. */
type KeySubject = [kind: 'asset' | 'series', name: string, sha256: string, rows: number, seriesKind?: string, rfForm?: string | null];

const fingerprints = new WeakMap<ReturnsPanel, PanelFingerprint>();

/** The fingerprint of a panel the cache handed out or stored (no encoding, no hashing), when known. */
export function knownFingerprint(panel: ReturnsPanel): PanelFingerprint | undefined {
  return fingerprints.get(panel);
}

interface Statements {
  asset: Database.Statement;
  series: Database.Statement;
  get: Database.Statement;
  put: Database.Statement;
  evict: Database.Statement;
}

const statements = new WeakMap<Database.Database, Statements>();

function st(db: Database.Database): Statements {
  let s = statements.get(db);
  if (!s) {
    s = {
      asset: db.prepare("SELECT a.form AS form, p.sha256 AS sha256, p.rows AS rows FROM asset a LEFT JOIN subject_pack p ON p.kind = 'asset' AND p.subject_id = a.id WHERE a.name = ?"),
      series: db.prepare("SELECT s.kind AS kind, s.rf_form AS rfForm, p.sha256 AS sha256, p.rows AS rows FROM series s LEFT JOIN subject_pack p ON p.kind = 'series' AND p.subject_id = s.id WHERE s.name = ?"),
      get: db.prepare('SELECT fingerprint, subjects, idx, columns FROM panel_cache WHERE key = ?'),
      put: db.prepare('INSERT OR REPLACE INTO panel_cache (key, fingerprint, subjects, bytes, idx, columns) VALUES (?, ?, ?, ?, ?, ?)'),
      evict: db.prepare(`DELETE FROM panel_cache WHERE rowid NOT IN (SELECT rowid FROM panel_cache ORDER BY rowid DESC LIMIT ${MAX_ENTRIES})`),
    };
    statements.set(db, s);
  }
  return s;
}

/** The series a spec reads, in the order the panel load reads them (src-main/data/panel.ts seriesNeeded, names once). */
function seriesNames(spec: PanelSpec): string[] {
  const names = new Set<string>();
  if (spec.riskfree) names.add(spec.riskfree);
  for (const f of spec.model.factors) names.add(f);
  if (spec.model.consumption) names.add(spec.model.consumption);
  for (const z of spec.instruments?.series ?? []) names.add(z);
  return [...names];
}

/**
 * The key: the text naming everything the panel came from (JSON), itself, not a digest of
 * it. Hashing it cost every cached read 5-9 ms of SHA-256 on code not yet compiled in a new
 * process (the demo's 33 subjects); SQLite compares a few kilobytes of text in microseconds,
 * and the cache holds at most MAX_ENTRIES keys.
 */
function keyOf(spec: PanelSpec, priceRatios: boolean, subjects: KeySubject[]): string {
  const panelKeys = {
    frequency: spec.frequency,
    start: spec.start ?? null,
    end: spec.end ?? null,
    assets: spec.assets,
    returns: spec.returns,
    riskfree: spec.riskfree ?? null,
    includeRiskfree: spec.includeRiskfree ?? null,
    dayCount: spec.dayCount ?? null,
    factors: spec.model.factors,
    consumption: spec.model.consumption ?? null,
    instruments: spec.instruments ?? null,
  };
  const described = subjects.map(([kind, name, sha256, rows, seriesKind, rfForm]) => [kind, name, sha256, rows, seriesKind ?? null, rfForm ?? null]);
  return JSON.stringify({ layout: LAYOUT, build: identity, spec: panelKeys, priceRatios, subjects: described });
}

/** The key of the panel the store's current data would give, or null when the cache does not apply. */
function currentKey(store: Store, spec: PanelSpec, priceRatios: boolean): string | null {
  const s = st(store.db);
  const subjects: KeySubject[] = [];
  for (const name of spec.assets === 'all' ? store.assets() : spec.assets) {
    const r = s.asset.get(name) as { form: string | null; sha256: string | null; rows: number | null } | undefined;
    // a portfolio, an asset stored as returns, or a history without a current pack: built from the rows
    if (!r || r.form !== null || r.sha256 === null || r.rows === null) return null;
    subjects.push(['asset', name, r.sha256, r.rows]);
  }
  if (subjects.length === 0) return null;
  for (const name of seriesNames(spec)) {
    const r = s.series.get(name) as { kind: string; rfForm: string | null; sha256: string | null; rows: number | null } | undefined;
    if (!r || r.sha256 === null || r.rows === null) return null;
    subjects.push(['series', name, r.sha256, r.rows, r.kind, r.rfForm]);
  }
  return keyOf(spec, priceRatios, subjects);
}

/** The cached panel of this spec on the store's current data, or null (a miss, or the cache is off). */
export function cachedPanel(store: Store, spec: PanelSpec, priceRatios = false): CachedPanel | null {
  if (identity === null) return null;
  let row: { fingerprint: string; subjects: string; idx: string; columns: Buffer } | undefined;
  try {
    // the digests and the entry from one snapshot of the database
    row = store.db.transaction(() => {
      const key = currentKey(store, spec, priceRatios);
      return key === null ? undefined : (st(store.db).get.get(key) as typeof row);
    })();
  } catch {
    return null; // e.g. a database from before the cache (opened read-only, not migrated)
  }
  if (!row) return null;
  const fingerprint = JSON.parse(row.fingerprint) as PanelFingerprint;
  const panel = readSnapshot(row.idx, row.columns, { trusted: true }).get(fingerprint.sha256);
  if (!panel) return null;
  fingerprints.set(panel, fingerprint);
  return { panel, fingerprint, subjects: JSON.parse(row.subjects) as SubjectFingerprint[] };
}

/**
 * Stores a panel just built from `input` (src-main/data/panel.ts loadPanelInput, as loaded),
 * under the digests of that data: the ones the store handed out with it (from its packs), so
 * nothing is hashed here but the panel's fingerprint, which the run record then takes as it is
 * (knownFingerprint). Does nothing (null) when the cache does not apply: a portfolio or an asset
 * stored as returns among the subjects, a subject loaded without a digest (its pack could not
 * be written), a read-only database.
 */
export function cachePanel(store: Store, input: BuildPanelInput, panel: ReturnsPanel): PanelFingerprint | null {
  if (identity === null || store.readOnly || input.portfolios?.length) return null;
  const subjects: SubjectFingerprint[] = [];
  const keySubjects: KeySubject[] = [];
  for (const h of input.histories) {
    const d = isReturnHistory(h) ? undefined : store.loadedDigest(h);
    if (!d) return null;
    subjects.push(d);
    keySubjects.push(['asset', d.name, d.sha256, d.rows]);
  }
  for (const x of input.series) {
    const d = store.loadedDigest(x);
    if (!d) return null;
    subjects.push(d);
    keySubjects.push(['series', d.name, d.sha256, d.rows, x.kind, x.rfForm ?? null]);
  }
  const spec = input.spec;
  const want = seriesNames(spec);
  if (keySubjects.length === 0 || input.series.length !== want.length || input.series.some((x, i) => x.name !== want[i])) return null;
  const fingerprint = fingerprintPanel(panel, nodeSha256);
  fingerprints.set(panel, fingerprint);
  const db = store.db;
  if (db.inTransaction) return fingerprint;
  const key = keyOf(spec, input.priceRatios === true, keySubjects);
  const writer = new SnapshotWriter({ shareColumns: false });
  writer.add(panel, fingerprint);
  const { index, columns } = writer.finish();
  const previous = Number(db.pragma('busy_timeout', { simple: true }));
  try {
    db.pragma('busy_timeout = 0'); // another writer holds the lock: no cached copy this time, no wait
    db.transaction(() => {
      const s = st(db);
      s.put.run(key, JSON.stringify(fingerprint), JSON.stringify(subjects), columns.length, index, columns);
      s.evict.run();
    }).immediate();
  } catch {
    // busy, full or damaged: the panel stands without a cached copy
  } finally {
    db.pragma(`busy_timeout = ${previous}`);
  }
  return fingerprint;
}
