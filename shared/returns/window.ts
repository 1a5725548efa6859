/**
 * The common sample: the run of consecutive periods on which every kept asset and
 * every required series has a value.
 *
 * - The window starts at the explicit first period when one is given, else at the
 *   latest first value among the assets; likewise at the end. It never reaches outside
 *   the span where every required series (risk-free, factors, consumption) has values.
 * - An asset without a value in some period of the window is dropped, with the reason;
 *   the window is then recomputed from the assets left, until nothing changes.
 */
import { PeriodMap } from './periodMap.js';

export interface WindowAsset {
  name: string;
  values: Map<number, unknown>;
}

export interface WindowResult {
  /** First and last period index (lo > hi: empty). */
  lo: number;
  hi: number;
  kept: string[];
  dropped: { asset: string; reason: string }[];
}

function extent(m: Map<number, unknown>): [number, number] {
  if (m instanceof PeriodMap) return m.extent();
  let lo = Number.POSITIVE_INFINITY;
  let hi = Number.NEGATIVE_INFINITY;
  for (const k of m.keys()) {
    if (k < lo) lo = k;
    if (k > hi) hi = k;
  }
  return [lo, hi];
}

export function commonWindow(
  assets: readonly WindowAsset[],
  required: readonly Map<number, unknown>[],
  bounds: { lo?: number; hi?: number },
  describe: (index: number) => string,
): WindowResult {
  let seriesLo = bounds.lo ?? Number.NEGATIVE_INFINITY;
  let seriesHi = bounds.hi ?? Number.POSITIVE_INFINITY;
  for (const r of required) {
    const [a, b] = extent(r);
    seriesLo = Math.max(seriesLo, a);
    seriesHi = Math.min(seriesHi, b);
  }
  const dropped: { asset: string; reason: string }[] = [];
  let active = assets.filter((a) => a.values.size > 0);
  let lo = seriesLo;
  let hi = seriesHi;
  for (;;) {
    lo = seriesLo;
    hi = seriesHi;
    for (const a of active) {
      const [first, last] = extent(a.values);
      if (bounds.lo === undefined) lo = Math.max(lo, first);
      if (bounds.hi === undefined) hi = Math.min(hi, last);
    }
    if (active.length === 0 || !(lo <= hi) || !Number.isFinite(lo) || !Number.isFinite(hi)) break;
    const still: WindowAsset[] = [];
    for (const a of active) {
      let missing = 0;
      let firstMissing = -1;
      if (a.values instanceof PeriodMap) ({ missing, first: firstMissing } = a.values.missingIn(lo, hi));
      else {
        for (let k = lo; k <= hi; k++) {
          if (!a.values.has(k)) {
            if (missing === 0) firstMissing = k;
            missing += 1;
          }
        }
      }
      if (missing === 0) still.push(a);
      else
        dropped.push({
          asset: a.name,
          reason: `no value in ${missing} of the ${hi - lo + 1} periods ${describe(lo)}..${describe(hi)} (first missing: ${describe(firstMissing)})`,
        });
    }
    if (still.length === active.length) break;
    active = still;
  }
  if (active.length === 0 || !(lo <= hi) || !Number.isFinite(lo) || !Number.isFinite(hi)) {
    return { lo: Number.isFinite(lo) ? lo : 0, hi: Number.isFinite(hi) ? hi : -1, kept: [], dropped };
  }
  return { lo, hi, kept: active.map((a) => a.name), dropped };
}
