/**
 * Numbers the screens show outside result tables (timings, counts in the import log);
 * result tables take their text from the presentation model (shared/present/format.ts).
 */
export const DASH = '—';

export function fixed(x: number | null | undefined, decimals: number): string {
  if (x === null || x === undefined || !Number.isFinite(x)) return DASH;
  const s = x.toFixed(decimals);
  return /^-0\.?0*$/.test(s) ? s.slice(1) : s;
}

export function int(x: number | null | undefined): string {
  return x === null || x === undefined || !Number.isFinite(x) ? DASH : Math.round(x).toLocaleString('en-US');
}
