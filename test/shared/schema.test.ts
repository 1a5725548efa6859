/**
 * shared/schema.ts, the schemas every spec and bridge request is checked with: what each
 * builder accepts and refuses, the messages (path and wording), defaults (copied, so a parsed
 * value never shares a schema's default), strict objects naming unknown keys, unions
 * reporting the problems inside the value of their kind, and the spec's own refusals
 * through parseFitSpec (every problem at once, each with its key).
 */
import { describe, expect, it } from 'vitest';
import { s, type Infer, type Input } from '../../shared/schema.js';
import { parseFitSpec } from '../../shared/spec.js';

const messages = (schema: { safeParse(v: unknown): { success: boolean; error?: { issues: { path: (string | number)[]; message: string }[] } } }, v: unknown) => {
  const r = schema.safeParse(v);
  return r.success ? [] : (r.error?.issues ?? []).map((i) => `${i.path.join('.')}: ${i.message}`);
};

describe('schema builders', () => {
  it('strings: kind, length, pattern and a custom test', () => {
    const name = s.string().min(1).max(5);
    expect(name.parse('abc')).toBe('abc');
    expect(messages(name, '')).toEqual([': expected a non-empty string']);
    expect(messages(name, 'abcdef')).toEqual([': expected at most 5 characters']);
    expect(messages(name, 7)).toEqual([': expected a non-empty string, got 7']);
    expect(messages(s.string().regex(/^\d{4}$/, 'expected a year'), '20x')).toEqual([': expected a year']);
    expect(messages(s.string().refine((v) => v !== 'no', 'not that'), 'no')).toEqual([': not that']);
  });

  it('numbers: whole, bounds, positive, and no NaN or infinity', () => {
    const lag = s.number().int().min(1).max(1000);
    expect(lag.parse(12)).toBe(12);
    expect(messages(lag, 0)).toEqual([': expected a whole number from 1 to 1000, got 0']);
    expect(messages(lag, 2.5)).toEqual([': expected a whole number from 1 to 1000, got 2.5']);
    expect(messages(lag, '3')).toEqual([': expected a whole number from 1 to 1000, got "3"']);
    expect(messages(s.number().positive(), 0)).toEqual([': expected a positive number, got 0']);
    expect(s.number().safeParse(Number.NaN).success).toBe(false);
    expect(s.number().finite().safeParse(Number.POSITIVE_INFINITY).success).toBe(false);
    expect(messages(s.number().int().min(2), 1)).toEqual([': expected a whole number of at least 2, got 1']);
  });

  it('booleans, enums, literals, unknown', () => {
    expect(messages(s.boolean(), 'yes')).toEqual([': expected true or false, got "yes"']);
    expect(messages(s.enum(['first', 'second']), 'third')).toEqual([': expected one of "first", "second", got "third"']);
    expect(s.literal('auto').parse('auto')).toBe('auto');
    expect(messages(s.literal('auto'), 'Auto')).toEqual([': expected "auto", got "Auto"']);
    expect(s.unknown().parse(undefined)).toBeUndefined();
  });

  it('arrays: items checked with their index, length bounds', () => {
    const list = s.array(s.string().min(1)).min(1).max(3);
    expect(list.parse(['a', 'b'])).toEqual(['a', 'b']);
    expect(messages(list, [])).toEqual([': expected at least 1 item, got 0']);
    expect(messages(list, ['a', 'b', 'c', 'd'])).toEqual([': expected at most 3 items, got 4']);
    expect(messages(list, ['a', '', 3])).toEqual(['1: expected a non-empty string', '2: expected a non-empty string, got 3']);
  });

  it('objects: missing keys, defaults, optional keys, unknown keys (strict) or left out', () => {
    const o = s.object({ kind: s.enum(['a', 'b']).default('a'), list: s.array(s.string()).default([]), note: s.string().optional(), n: s.number() }).strict();
    const v = o.parse({ n: 1 });
    expect(v).toEqual({ kind: 'a', list: [], n: 1 });
    expect('note' in v).toBe(false);
    v.list.push('changed');
    expect(o.parse({ n: 2 }).list).toEqual([]); // a default is copied for each parse
    expect(messages(o, {})).toEqual(['n: missing: expected a number']);
    expect(messages(o, { n: 1, extra: 2, other: 3 })).toEqual([': unknown key(s) "extra", "other"']);
    expect(messages(o, [])).toEqual([': expected an object, got an empty list']);
    const loose = s.object({ n: s.number() });
    expect(loose.parse({ n: 1, extra: 2 })).toEqual({ n: 1 });
    const wider = o.extend({ kind: s.enum(['c']).default('c') });
    expect(wider.parse({ n: 1 }).kind).toBe('c');
    expect(wider.safeParse({ n: 1, extra: 1 }).success).toBe(false); // strict as the one it extends
    const r = o.safeParse({ kind: 'z', n: 'x', extra: 1 });
    expect(r.success).toBe(false); // every problem at once
    if (!r.success) {
      expect(r.error.issues.map((i) => i.code)).toEqual(['invalid', 'invalid', 'unknown_keys']);
      expect(r.error.issues[2].keys).toEqual(['extra']);
    }
  });

  it('unions: the first option that takes the value; else the problems inside the value of its kind, or what the options take', () => {
    const lags = s.union([s.number().int().min(0).max(1000), s.literal('auto')]).default('auto');
    expect(lags.parse(undefined)).toBe('auto');
    expect(lags.parse(4)).toBe(4);
    expect(messages(lags, 'automatic')).toEqual([': expected a whole number from 0 to 1000 or "auto", got "automatic"']);
    const source = s.union([s.object({ path: s.string() }).strict(), s.array(s.string().min(1)).min(1)]);
    expect(messages(source, { path: 5 })).toEqual(['path: expected a string, got 5']);
    expect(messages(source, ['a', ''])).toEqual(['1: expected a non-empty string']);
    expect(messages(source, [])).toEqual([': expected an object or a non-empty list, got an empty list']);
    expect(messages(source, 3)).toEqual([': expected an object or a non-empty list, got 3']);
  });

  it('types: parsed values and inputs', () => {
    const o = s.object({ a: s.number().default(1), b: s.string().optional(), c: s.array(s.enum(['x', 'y'])) });
    const out: Infer<typeof o> = { a: 1, c: ['x'] };
    const input: Input<typeof o> = { c: ['y'] };
    expect(o.parse(input)).toEqual({ a: 1, c: ['y'] });
    expect(out.a).toBe(1);
  });
});

describe('spec refusals', () => {
  const refusal = (v: unknown) => {
    try {
      parseFitSpec(v);
    } catch (e) {
      return `${(e as { code?: string }).code}: ${(e as Error).message}`;
    }
    return '';
  };

  it('names every bad key with what it takes', () => {
    const m = refusal({ model: { kind: 'linear', factors: ['a'] }, estimator: { stage: 'fourth', lags: -1 }, frequncy: 'monthly' });
    expect(m).toMatch(/^SPEC_INVALID: /);
    expect(m).toContain('spec.estimator.stage: expected one of "first", "second", "iterated", "cue", got "fourth"');
    expect(m).toContain('spec.estimator.lags: expected a whole number from 0 to 1000 or "auto", got -1');
    expect(m).toContain('spec: unknown key(s) "frequncy"');
    expect(refusal({})).toContain('spec.model: missing: expected an object');
  });

  it('gives a full spec its defaults', () => {
    const spec = parseFitSpec({ model: { kind: 'linear', factors: ['a'] } });
    expect(spec.frequency).toBe('monthly');
    expect(spec.estimator).toEqual({ method: 'gmm', stage: 'second', weight: 'identity', lags: 'auto', centered: true, inferenceS: 'weighting', intercept: true, maxIterations: 100 });
    expect(spec.assets).toBe('all');
  });
});
