/**
 * Number text for exports. `exactNumber` is the full-precision form every machine-read
 * export uses (CSV cells, HTML data-value attributes): the shortest decimal that reads
 * back as the same double (ECMA-262 Number::toString), with the sign of -0 kept.
 * The others are display roundings, each stated in the export that uses it.
 */

export function exactNumber(x: number): string {
  return Object.is(x, -0) ? '-0' : String(x);
}

/** Fixed decimals; a value that rounds to zero prints without a minus sign. */
export function fixed(x: number, decimals: number): string {
  if (!Number.isFinite(x)) return String(x);
  const s = x.toFixed(decimals);
  return /^-0\.?0*$/.test(s) ? s.slice(1) : s;
}

/** Significant digits, plain notation between 1e-4 and 1e6, otherwise d.ddde±x. */
export function significant(x: number, digits: number): string {
  if (!Number.isFinite(x)) return String(x);
  if (x === 0) return '0';
  const a = Math.abs(x);
  if (a >= 1e-4 && a < 1e6) {
    const s = x.toPrecision(digits);
    if (!s.includes('e')) return s.includes('.') ? s.replace(/0+$/, '').replace(/\.$/, '') : s;
    return Number(s).toString();
  }
  const [m, e] = x.toExponential(digits - 1).split('e');
  const mant = m.includes('.') ? m.replace(/0+$/, '').replace(/\.$/, '') : m;
  return `${mant}e${e}`;
}

/** Display rounding by a column's role (see ReportColumn.format). */
export function displayNumber(x: number, format: NumberFormat | undefined): string {
  switch (format) {
    case 'integer':
      return fixed(x, 0);
    case 'stat':
      return fixed(x, 3);
    case 'p':
      return x < 0.0001 && x > 0 ? '<0.0001' : fixed(x, 4);
    default:
      return significant(x, 6);
  }
}

/**
 * Role of a numeric column: 'value' estimates, s.e., returns (6 significant digits on
 * screen); 'stat' test statistics and t (3 decimals); 'p' p-values (4 decimals);
 * 'integer' counts and degrees of freedom.
 */
export type NumberFormat = 'value' | 'stat' | 'p' | 'integer';
