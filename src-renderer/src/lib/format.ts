/** Numbers for tables: fixed decimals per column, right-aligned by the stylesheet, never NaN. */
export const DASH = '—';

export function fixed(x: number | null | undefined, decimals: number): string {
  if (x === null || x === undefined || !Number.isFinite(x)) return DASH;
  const s = x.toFixed(decimals);
  return /^-0\.?0*$/.test(s) ? s.slice(1) : s;
}

export function pct(x: number | null | undefined, decimals = 2): string {
  return x === null || x === undefined || !Number.isFinite(x) ? DASH : fixed(x * 100, decimals);
}

export function pValue(p: number | null | undefined): string {
  if (p === null || p === undefined || !Number.isFinite(p)) return DASH;
  if (p < 0.0005) return '<0.001';
  return p.toFixed(3);
}

export function int(x: number | null | undefined): string {
  return x === null || x === undefined || !Number.isFinite(x) ? DASH : Math.round(x).toLocaleString('en-US');
}

/** Scientific-aware estimate formatting: 4 decimals, or 3 significant digits in exponent form when tiny or huge. */
export function estimate(x: number | null | undefined): string {
  if (x === null || x === undefined || !Number.isFinite(x)) return DASH;
  const a = Math.abs(x);
  if (a !== 0 && (a < 1e-3 || a >= 1e6)) return x.toExponential(3);
  return fixed(x, 4);
}

/** Significance stars of common practice: * 10%, ** 5%, *** 1%. */
export function stars(p: number | null | undefined): string {
  if (p === null || p === undefined || !Number.isFinite(p)) return '';
  return p < 0.01 ? '***' : p < 0.05 ? '**' : p < 0.1 ? '*' : '';
}
