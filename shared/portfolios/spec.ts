/**
 * Options of a characteristic sort (the `deflator portfolio build` flags and the app's
 * portfolio screen). Keys are a contract: add, never rename.
 */
import { s, type AnySchema, type Infer, type Input } from '../schema.js';
import { FREQUENCIES, PERIODS_PER_YEAR, type Frequency } from '../data.js';
import { DeflatorError } from '../errors.js';
import { formatSpecIssues, isoDate } from '../spec.js';

export const CHARACTERISTICS = ['momentum', 'yield', 'price', 'size'] as const;
export type Characteristic = (typeof CHARACTERISTICS)[number];

export const sortSpecSchema = s
  .object({
    /** momentum: past return over `lookback` periods skipping the latest `skip`; yield: trailing dividends / price; price: price per share; size: price x shares outstanding. */
    characteristic: s.enum(CHARACTERISTICS),
    groups: s.number().int().min(2).max(100).default(5),
    weight: s.enum(['equal', 'value']).default('equal'),
    /** Return frequency of the portfolios. */
    frequency: s.enum(FREQUENCIES).default('monthly'),
    /** How often the sort is redone: at the last period of each such calendar period (default: every period). */
    rebalance: s.enum(FREQUENCIES).optional(),
    /** Name prefix: portfolios are <name>.q1 .. <name>.q<groups>. */
    name: s.string().regex(/^[A-Za-z][A-Za-z0-9_-]*$/, 'a name starts with a letter and holds letters, digits, _ or -'),
    /** Look-back in periods (momentum and yield; default one year of periods). */
    lookback: s.number().int().min(1).max(10000).optional(),
    /** Momentum: latest periods skipped (default 1, the 12-1 convention). */
    skip: s.number().int().min(0).max(10000).default(1),
    /** A bucket with fewer eligible assets than this has no return for that holding span. */
    minAssets: s.number().int().min(1).default(1),
    /** Only these assets (default: every stored asset). */
    assets: s.array(s.string().min(1)).min(1).optional(),
    /** First and last period considered (ISO dates). */
    start: isoDate.optional(),
    end: isoDate.optional(),
  })
  .strict();

export type SortSpecInput = Input<typeof sortSpecSchema>;

export interface SortSpec {
  characteristic: Characteristic;
  groups: number;
  weight: 'equal' | 'value';
  frequency: Frequency;
  rebalance: Frequency;
  name: string;
  lookback: number;
  skip: number;
  minAssets: number;
  assets?: string[];
  start?: string;
  end?: string;
}

const RANK: Record<Frequency, number> = { daily: 0, weekly: 1, monthly: 2, quarterly: 3, annual: 4 };

export function parseSortSpec(input: unknown): SortSpec {
  const r = sortSpecSchema.safeParse(input);
  if (!r.success) throw new DeflatorError('SPEC_INVALID', formatSpecIssues(r.error, 'portfolio'), 'fix the options named above (deflator portfolio build --help)');
  const s = r.data;
  const rebalance = s.rebalance ?? s.frequency;
  if (RANK[rebalance] < RANK[s.frequency]) {
    throw new DeflatorError('SPEC_INVALID', `portfolio.rebalance: ${rebalance} is more frequent than the ${s.frequency} returns`, 'rebalance at the return frequency or less often');
  }
  const lookback = s.lookback ?? PERIODS_PER_YEAR[s.frequency];
  if (s.characteristic === 'momentum' && s.skip >= lookback) {
    throw new DeflatorError('SPEC_INVALID', `portfolio.skip: skipping ${s.skip} of a ${lookback}-period look-back leaves no periods`, 'use a longer look-back or skip fewer periods');
  }
  if (s.start && s.end && s.start > s.end) throw new DeflatorError('SPEC_INVALID', `portfolio.start ${s.start} is after end ${s.end}`, 'swap them');
  const out: SortSpec = { characteristic: s.characteristic, groups: s.groups, weight: s.weight, frequency: s.frequency, rebalance, name: s.name, lookback, skip: s.skip, minAssets: s.minAssets };
  if (s.assets) out.assets = s.assets;
  if (s.start) out.start = s.start;
  if (s.end) out.end = s.end;
  return out;
}

/** Name of bucket g (1-based) of a sort: <prefix>.q<g>. */
export function bucketName(prefix: string, g: number): string {
  return `${prefix}.q${g}`;
}
