/** What `deflator replay` and the app's replay call report (src-main/runs/replay.ts computes it). */
import type { ValueDifference } from './exact-json.js';
import type { RunKind, StaleItem } from './run-record.js';

export interface PanelCheck {
  recorded: string;
  /** Fingerprint of the panel rebuilt now; null when it could not be rebuilt. */
  current: string | null;
  matches: boolean;
}

export interface ReplayReport {
  run: number;
  kind: RunKind;
  label: string;
  recordedVersion: string;
  currentVersion: string;
  /** The run's data changed since it was recorded. */
  stale: boolean;
  staleItems: StaleItem[];
  panels: PanelCheck[];
  /** Worker threads the run was recorded with, and those the replay used (when known; information only, the numbers do not depend on them). */
  recordedThreads?: number;
  usedThreads?: number;
  /**
   * Set when the numbers differ and the run's back-test chunks of windows (where its
   * rolling sums restart) were not those used now: recorded null for a run recorded
   * before the chunks were fixed by the spec. Such a run's last bits can differ.
   */
  chunkWindows?: { recorded: number | null; current: number };
  /** Number of numeric values compared. */
  compared: number;
  /** Values (numbers, texts, missing keys) that differ; at most a limit of them listed. */
  differing: number;
  differences: ValueDifference[];
  /** Recomputing failed (e.g. data deleted): the error, and nothing was compared. */
  error?: string;
  /** Everything matched: not stale, every panel fingerprint, every number. */
  ok: boolean;
}
