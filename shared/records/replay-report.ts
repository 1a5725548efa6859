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
  /**
   * How the numbers were judged: 'exact' (bit for bit) when the run was recorded by this
   * software version with this kernel revision; 'tolerance' otherwise (another version, or
   * another revision of the numerical kernels: their last bits may differ), against
   * `tolerance`, solver diagnostics (a fit's `convergence`) excepted.
   */
  mode?: 'exact' | 'tolerance';
  tolerance?: { relative: number; absolute: number };
  /** Kernel revisions: the run's (shared/linalg/identity.ts; 'linalg-1' when it recorded none) and this build's. */
  recordedKernels?: string;
  currentKernels?: string;
  /** The largest difference between two numbers, relative to the larger of them (when any differ). */
  largest?: ValueDifference & { relative: number };
  /** Tolerance mode: differences beyond the tolerance (numbers, texts, shapes), solver diagnostics and added keys excepted. */
  beyondTolerance?: number;
  /** Tolerance mode: result keys this version adds that the recorded result does not have (results add keys, never rename them). */
  addedKeys?: string[];
  /** Everything matched: not stale, every panel fingerprint, every number (bit for bit, or within the tolerance in tolerance mode). */
  ok: boolean;
}

/** A solver diagnostic (iterations, stopping criterion): not held to the cross-version tolerance. */
export function isSolverDiagnostic(path: string): boolean {
  return /(^|\.)convergence(\.|$)/.test(path);
}

/**
 * Classifies value differences: the largest numeric one (relative to the larger value), how
 * many are beyond `tol` (a number outside |a - b| <= rel max(|a|, |b|) + abs, or any text or
 * shape difference), solver diagnostics excepted, and the keys the recomputed result has
 * that the stored one lacks (a later version's additions).
 */
export function judgeDifferences(differences: readonly ValueDifference[], tol: { relative: number; absolute: number }): { largest?: ValueDifference & { relative: number }; beyond: number; added: string[] } {
  let largest: (ValueDifference & { relative: number }) | undefined;
  let beyond = 0;
  const added: string[] = [];
  for (const d of differences) {
    if (d.stored === ABSENT && d.recomputed !== ABSENT) {
      added.push(d.path);
      continue;
    }
    const diag = isSolverDiagnostic(d.path);
    if (typeof d.stored === 'number' && typeof d.recomputed === 'number') {
      const a = d.stored;
      const b = d.recomputed;
      const scale = Math.max(Math.abs(a), Math.abs(b));
      const gap = Math.abs(a - b);
      const relative = Number.isNaN(gap) ? Number.POSITIVE_INFINITY : scale > 0 ? gap / scale : 0;
      if (!diag && (!largest || relative > largest.relative)) largest = { ...d, relative };
      if (!diag && !(gap <= tol.relative * scale + tol.absolute)) beyond++;
    } else if (!diag) beyond++;
  }
  return { ...(largest ? { largest } : {}), beyond, added };
}

/** How diffExact marks a key one side does not have. */
const ABSENT = '(absent)';
