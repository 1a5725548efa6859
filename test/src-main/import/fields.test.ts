/**
 * Decimal and date parsing. Numbers are checked bit for bit against Python's float()
 * (correctly rounded; fixtures/decimals.json from fixtures/make_decimals.py) and against
 * ECMAScript's Number() (ECMA-262 StringToNumber, also correctly rounded) on random
 * decimal strings. Dates against the Gregorian calendar rules (ISO 8601).
 */
import fc from 'fast-check';
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { DateParser, dateFormat, parseNumber } from '../../../src-main/import/fields.js';
import { dayNumber } from '../../../src-main/data/calendar.js';

const bytes = (s: string) => Buffer.from(s, 'utf8');
const num = (s: string, sep = '') => parseNumber(bytes(s), 0, Buffer.byteLength(s), sep ? sep.charCodeAt(0) : 0);
const bitsOf = (x: number) => Buffer.from(new Float64Array([x]).buffer).reverse().toString('hex');

interface DecimalFixture {
  source: string;
  cases: { text: string; bits: string }[];
}
const fixture = JSON.parse(readFileSync(path.join(import.meta.dirname, 'fixtures', 'decimals.json'), 'utf8')) as DecimalFixture;

describe('parseNumber', () => {
  it(`matches Python float() bit for bit on ${fixture.cases.length} decimal strings (fixtures/decimals.json)`, () => {
    for (const c of fixture.cases) {
      const got = num(c.text);
      // source: Python 3.11 float(text), tolerance 0 (same IEEE 754 bit pattern)
      expect(bitsOf(got), `${c.text}: got ${got} (${bitsOf(got)}), expected bits ${c.bits}, tolerance 0`).toBe(c.bits);
    }
  });

  it('matches Number() on random decimal strings (fast path and fallback alike)', () => {
    const decimal = fc
      .tuple(fc.constantFrom('', '-', '+'), fc.stringMatching(/^[0-9]{1,20}$/), fc.option(fc.stringMatching(/^[0-9]{0,20}$/)), fc.option(fc.integer({ min: -340, max: 320 })))
      .map(([sign, int, frac, exp]) => `${sign}${int}${frac === null ? '' : `.${frac}`}${exp === null ? '' : `e${exp}`}`);
    fc.assert(
      fc.property(decimal, (text) => {
        const ref = Number(text);
        const got = num(text);
        if (!Number.isFinite(ref)) return Number.isNaN(got); // overflow to Infinity is not a number we accept
        return Object.is(got, ref);
      }),
      { numRuns: 20000, seed: 754 },
    );
  });

  it('rejects what is not a plain decimal: hex, Infinity, NaN, empty, stray characters, a comma as decimal mark', () => {
    for (const t of ['', ' ', '0x10', 'Infinity', '-Infinity', 'NaN', '1.2.3', '1e', '1e+', '--1', '1,5', '12abc', '.', 'e5', '1_000', '1e400']) {
      expect(Number.isNaN(num(t)), `"${t}"`).toBe(true);
    }
  });

  it('spaces around the number are allowed; -0 keeps its sign', () => {
    expect(num('  42.5 ')).toBe(42.5);
    expect(Object.is(num('-0'), -0)).toBe(true);
    expect(Object.is(num('-0.0e5'), -0)).toBe(true);
  });

  it('thousands separators only in groups of three, only when enabled', () => {
    expect(num('1,234,567.25', ',')).toBe(1234567.25);
    expect(num('1 234', ' ')).toBe(1234);
    expect(num("12'345.5", "'")).toBe(12345.5);
    expect(num('123', ',')).toBe(123);
    for (const t of ['1,23', '1234,567', ',123', '1,,234', '1,234,56']) expect(Number.isNaN(num(t, ',')), t).toBe(true);
    expect(Number.isNaN(num('1,234'))).toBe(true);
  });
});

describe('DateParser', () => {
  const parse = (fmt: string, text: string) => new DateParser(dateFormat(fmt)).parse(bytes(text), 0, Buffer.byteLength(text));

  it('day numbers agree with the Gregorian calendar (1970-01-01 = 0; 2000-03-01 = 11017)', () => {
    // counted independently: Date.UTC uses the proleptic Gregorian calendar (ECMA-262 sec. 21.4.1)
    for (const [y, m, d] of [[1970, 1, 1], [2000, 3, 1], [1900, 2, 28], [2024, 2, 29], [1601, 1, 1], [2399, 12, 31]]) {
      expect(dayNumber(y, m, d)).toBe(Date.UTC(y, m - 1, d) / 86400000);
    }
    expect(dayNumber(2000, 3, 1)).toBe(11017);
  });

  it('every day of 1899-2101 parses in ISO and comes back as the same ISO text; invalid days are named', () => {
    const p = new DateParser();
    for (let day = dayNumber(1899, 1, 1); day <= dayNumber(2101, 12, 31); day++) {
      const iso = new Date(day * 86400000).toISOString().slice(0, 10);
      const got = p.parse(bytes(iso), 0, 10);
      expect(got).toBe(day);
      expect(p.text(day)).toBe(iso);
    }
    expect(parse('YYYY-MM-DD', '2023-02-30')).toBe('2023-02 has no day 30');
    expect(parse('YYYY-MM-DD', '2023-04-31')).toBe('2023-04 has no day 31');
    expect(parse('YYYY-MM-DD', '2023-00-10')).toBe('month 0 does not exist');
    expect(parse('YYYY-MM-DD', '2023-1-10')).toBe('expected YYYY-MM-DD'); // ISO wants two-digit months
    expect(parse('YYYY-MM-DD', '2023/01/10')).toBe('expected YYYY-MM-DD');
  });

  it('named orders read the same text differently, as told; never guessed', () => {
    expect(parse('DD/MM/YYYY', '03/04/2020')).toBe(dayNumber(2020, 4, 3));
    expect(parse('MM/DD/YYYY', '03/04/2020')).toBe(dayNumber(2020, 3, 4));
    expect(parse('MM/DD/YYYY', '13/04/2020')).toBe('month 13 does not exist');
    expect(parse('DD/MM/YYYY', '3/4/2020')).toBe(dayNumber(2020, 4, 3));
    expect(parse('DD/MM/YYYY', '03/04/20')).toBe('expected DD/MM/YYYY');
    expect(parse('DD/MM/YYYY', '03-04-2020')).toBe('expected DD/MM/YYYY');
    expect(parse('YYYYMMDD', '20200403')).toBe(dayNumber(2020, 4, 3));
    expect(parse('YYYYMMDD', '2020043')).toBe('expected YYYYMMDD');
  });
});
