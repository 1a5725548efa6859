/**
 * Reply and event types of the bridge: what the app's screens receive from the
 * main side (Electron IPC or the loopback HTTP server). Plain JSON data only.
 */
import type { Frequency, SeriesKind } from '../data.js';

/** One stored history as the data screen lists it (coverage of an asset or a series). */
export interface CoverageRow {
  name: string;
  /** 'asset' for a price history, a series kind, or 'portfolio' for a built return series. */
  kind: 'asset' | SeriesKind | 'portfolio';
  first: string | null;
  last: string | null;
  /** Number of stored observations. */
  count: number;
  /**
   * Gaps: calendar steps with no observation, judged against the history's own usual
   * spacing (a step more than twice the median spacing counts as a gap).
   */
  gaps: number;
  /** The longest gap, in days, where there is one. */
  longestGapDays?: number;
  /** How a risk-free series was quoted, where known. */
  rfForm?: string;
  /** Assets: how the history arrived (absent for older replies: prices). */
  source?: 'prices' | 'returns';
  /** Assets stored as returns: "net returns (percent, excess)" and the like. */
  data?: string;
  /** Assets stored as returns: periods holding a missing value (gaps). */
  missing?: number;
}

export interface Coverage {
  assets: CoverageRow[];
  series: CoverageRow[];
  portfolios: CoverageRow[];
}

/** The sample a fit spec would use on the stored data (the set-up shows the lags "auto" gives). */
export interface SamplePreview {
  start: string;
  end: string;
  T: number;
  N: number;
  /** The Newey-West lags the fit will use: the spec's number, or floor(4 (T/100)^(2/9)) for "auto". */
  lags: number;
  lagsRule: string;
}

export interface AppInfo {
  version: string;
  /** File name of the open project database (never a full path). */
  database: string;
  caution: string;
  counts: { assets: number; series: number; portfolios: number };
}

/** Price against the total-return index of one asset (METHODS sections 1 and 8). */
export interface AssetHistory {
  asset: string;
  frequency: Frequency | 'stored';
  dates: string[];
  /** Price per share (split-adjusted); empty for an asset stored as returns (it has no price). */
  price: number[];
  /** Total-return index V_t, scaled to start at the first price so both lines share an axis (1 at the period before the first return for an asset stored as returns). */
  totalReturn: number[];
  dividends: number;
  /** How the history arrived (absent: prices). */
  source?: 'prices' | 'returns';
  /** What the index line is: "total-return index", or "excess-return index" for excess returns compounded (no risk-free series). */
  indexLabel?: string;
  /** Assets stored as returns: "net returns (percent)" and the like. */
  data?: string;
}

/** One import stored in the project (the import log), as the app lists it. */
export interface StoredImport {
  id: number;
  /** The file's own name, without folders (an uploaded copy shows the name it was chosen under). */
  file: string;
  kind: string;
  /** ISO time of the import. */
  importedAt: string;
  rowsRead: number;
  rowsStored: number;
  rowsRejected: number;
  /** The first warnings (up to 50) and how many there were. */
  warnings: ImportWarning[];
  warningCount: number;
}

export interface ImportWarning {
  /** What kind of warning (gap, stale-price, large-return, rejected-row ...), where known. */
  kind?: string;
  /** The asset or series it is about. */
  subject?: string;
  /** File line (1-based) where known. */
  line?: number;
  column?: string;
  message: string;
}

/** What a file holds, for the import calls. */
export type ImportKind = 'prices' | 'series' | 'returns';

/** One cell of an import preview: the text in the file and what the import reads from it. */
export interface PreviewCell {
  text: string;
  /** ok: read; missing: empty or a missing-value code (no value: a gap); error: refused (see note); name: an asset name; unused: a column the import does not read. */
  status: 'ok' | 'missing' | 'error' | 'name' | 'unused';
  /** What is read: the date as stored (ISO) or the number (a return as a decimal net return, percent divided by 100). */
  read?: string;
  /** Why the cell is refused, or what it means (e.g. "a gap, not a zero"). */
  note?: string;
}

/** The first rows of a file as an import would read them, before anything is stored. */
export interface ImportPreview {
  file: string;
  kind: ImportKind;
  /** The header, with what the import does with each column. */
  columns: { name: string; role: 'date' | 'asset' | 'price' | 'dividend' | 'adjust' | 'shares' | 'return' | 'value' | 'unused' }[];
  /** Data rows (line = the file's physical line). */
  rows: { line: number; cells: PreviewCell[] }[];
  /** The first problem the import itself finds in these rows (line and column 1-based where known), with its hint. */
  problem?: { code: string; line?: number; column?: number; message: string; hint?: string };
  /** What the import would read from them: assets or series, first and last date, frequency. */
  reads?: { names: string[]; first: string | null; last: string | null; frequency: string | null; warnings: string[] };
  /** More rows follow in the file. */
  more: boolean;
}

export interface ImportReport {
  file: string;
  kind: ImportKind;
  /** Rows (observations or values) stored. */
  rows: number;
  rowsRead?: number;
  rowsRejected?: number;
  /** Asset or series names written. */
  names: string[];
  first?: string | null;
  last?: string | null;
  warnings: ImportWarning[];
  durationMs: number;
}

export interface TaskProgress {
  type: 'progress';
  taskId: string;
  /** Units done out of total (windows, files, rows ...). */
  done: number;
  total: number;
  stage?: string;
}

export type MenuAction = 'open-database' | 'new-database' | 'import-prices' | 'import-series' | 'export' | 'save-spec' | 'load-spec';

export type BridgeEvent =
  | TaskProgress
  | { type: 'task-end'; taskId: string; ok: boolean }
  /** A native menu item was chosen; `path` is a file the user picked in a dialog. */
  | { type: 'menu'; action: MenuAction; path?: string }
  /** Another project database was opened. */
  | { type: 'project'; database: string };
