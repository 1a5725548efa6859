/**
 * Back-test window schedule (METHODS 6): estimation windows of W periods, rolling
 * (start moves by s) or expanding (start fixed at the first period, end moves by s),
 * each followed by h held-out periods. A window is formed only when its whole
 * held-out span lies inside the sample.
 */
import { DeflatorError } from '../errors.js';
import type { BacktestSpec } from '../spec.js';
import { mapPanelPeriods, type ReturnsPanel } from '../panel.js';

export interface WindowBounds {
  /** Estimation periods [start, end), panel indices. */
  start: number;
  end: number;
  /** Held-out periods [oosStart, oosEnd). */
  oosStart: number;
  oosEnd: number;
}

export function windowSchedule(T: number, bt: BacktestSpec): WindowBounds[] {
  const { window: W, step, horizon: h, expanding } = bt;
  if (W + h > T) {
    throw new DeflatorError(
      'SAMPLE_TOO_SHORT',
      `backtest: a window of ${W} periods plus ${h} held-out period(s) needs ${W + h} periods; the sample has ${T}`,
      'shorten backtest.window or backtest.horizon, or widen the sample (start/end)',
    );
  }
  const out: WindowBounds[] = [];
  for (let k = 0; ; k++) {
    const start = expanding ? 0 : k * step;
    const end = expanding ? W + k * step : start + W;
    if (end + h > T) break;
    out.push({ start, end, oosStart: end, oosEnd: end + h });
  }
  return out;
}

const MIN_CHUNK_WINDOWS = 16;

/**
 * Windows per chunk of the incremental engine: its rolling cross-moment sums restart
 * from scratch at windows 0, B, 2B, ... and roll in between, and the worker pool shares
 * whole chunks out among its threads. B depends on the back-test spec alone, never on
 * the number of threads, so every thread count gives the same bits.
 *
 * B = max(16, ceil(W / s)): rebuilding the sums of a window of W periods costs about as
 * much as rolling them by W periods, so a chunk that rolls W periods (W / s windows of
 * step s) keeps the rebuilds to a few per cent of the run (docs/methods.md, incremental
 * computation, has the timings); 16 at least, so that short windows with long steps do
 * not make the chunks too small to be worth a thread.
 */
export function windowsPerChunk(bt: Pick<BacktestSpec, 'window' | 'step'>): number {
  return Math.max(MIN_CHUNK_WINDOWS, Math.ceil(bt.window / bt.step));
}

/** The chunks [from, to) of a schedule of `count` windows, B = windowsPerChunk(bt) each (the last may be shorter). */
export function windowChunks(bt: BacktestSpec, count: number): [number, number][] {
  const B = windowsPerChunk(bt);
  const out: [number, number][] = [];
  for (let a = 0; a < count; a += B) out.push([a, Math.min(count, a + B)]);
  return out;
}

/** The panel restricted to periods [start, end) (views, no copies). */
export function slicePanel(panel: ReturnsPanel, start: number, end: number): ReturnsPanel {
  return mapPanelPeriods(panel, panel.periods.slice(start, end), (s) => s.subarray(start, end));
}

/** Newey-West lags for a window of n periods: the spec's number, or floor(4 (n/100)^(2/9)) (METHODS 3). */
export function windowLags(lags: number | 'auto', n: number): number {
  return lags === 'auto' ? Math.floor(4 * Math.pow(n / 100, 2 / 9)) : lags;
}
