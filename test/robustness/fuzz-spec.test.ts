/**
 * Property-based fuzzing of the spec validator (fast-check): parseFitSpec and
 * parseCompareSpec on arbitrary JSON, on arbitrary JavaScript values, on valid specs with
 * one structural mutation and on valid spec texts with one character mutation. Properties:
 *   - the only thing thrown is DeflatorError SPEC_INVALID, whose message names the key at
 *     fault on every line ("spec.<path>: ...") and which has a hint;
 *   - an accepted spec holds only finite numbers, survives JSON and parses again to the
 *     same value (run records store the parsed spec and replay parses it again);
 *   - an unmutated generated spec is accepted (so the generator itself is checked).
 * Seeds are fixed; DEFLATOR_FUZZ_SEED=<n> tries another sequence.
 */
import fc from 'fast-check';
import { afterAll, describe, expect, it } from 'vitest';
import { isDeflatorError } from '../../shared/errors.js';
import { FREQUENCIES } from '../../shared/data.js';
import { METHODS, MODEL_KINDS, STAGES, WEIGHTS, isCompareSpec, parseCompareSpec, parseFitSpec } from '../../shared/spec.js';
import { stopwatch } from './helpers.js';

const SEED = Number(process.env.DEFLATOR_FUZZ_SEED ?? 20261201);
const tally = { tried: 0, accepted: 0, rejected: 0 };
const done = stopwatch('fuzz spec');
afterAll(() => {
  console.log(`[robustness] fuzz spec: ${tally.tried} inputs tried, ${tally.accepted} accepted, ${tally.rejected} refused with SPEC_INVALID`);
  done();
});

function finiteEverywhere(v: unknown, where = 'spec'): void {
  if (typeof v === 'number' && !Number.isFinite(v)) throw new Error(`${where} is ${v} in an accepted spec`);
  if (Array.isArray(v)) v.forEach((x, i) => finiteEverywhere(x, `${where}.${i}`));
  else if (typeof v === 'object' && v !== null) for (const [k, x] of Object.entries(v)) finiteEverywhere(x, `${where}.${k}`);
}

/** Runs the validator the way the app does (compare or fit by shape) and checks the properties. */
function check(input: unknown): 'accepted' | 'rejected' {
  tally.tried++;
  let out: unknown;
  const compare = isCompareSpec(input);
  try {
    out = compare ? parseCompareSpec(input) : parseFitSpec(input);
  } catch (e) {
    if (!isDeflatorError(e)) throw new Error(`not a DeflatorError: ${e instanceof Error ? `${e.name}: ${e.message}\n${e.stack}` : String(e)}`);
    if (e.code !== 'SPEC_INVALID') throw new Error(`code ${e.code}, expected SPEC_INVALID`);
    if (!e.hint) throw new Error('no hint');
    for (const line of e.message.split('\n')) if (!/^spec(\.[^\s:]+)*: \S/.test(line)) throw new Error(`a message line does not name its key: ${JSON.stringify(line)}`);
    tally.rejected++;
    return 'rejected';
  }
  finiteEverywhere(out);
  const again = JSON.parse(JSON.stringify(out)) as unknown;
  if (compare) {
    const c = out as ReturnType<typeof parseCompareSpec>;
    const r = parseCompareSpec(JSON.parse(JSON.stringify(c.spec)));
    expect(r.spec).toEqual(c.spec);
    expect(r.fits).toEqual(c.fits);
    for (const f of c.fits) expect(parseFitSpec(JSON.parse(JSON.stringify(f)))).toEqual(f);
  } else {
    expect(parseFitSpec(again)).toEqual(out);
  }
  tally.accepted++;
  return 'accepted';
}

// ---------- valid specs
const NAME = fc.stringMatching(/^[A-Za-z][A-Za-z0-9_-]{0,8}$/);
const estimator = fc.record(
  {
    method: fc.constant('gmm' as const),
    stage: fc.constantFrom(...STAGES),
    weight: fc.constantFrom(...WEIGHTS),
    lags: fc.oneof(fc.integer({ min: 0, max: 24 }), fc.constant('auto' as const)),
    centered: fc.boolean(),
    maxIterations: fc.integer({ min: 1, max: 500 }),
  },
  { requiredKeys: [] },
);
const linearModel = fc.record({ kind: fc.constantFrom('linear' as const, 'linear-raw' as const), factors: fc.uniqueArray(NAME, { minLength: 1, maxLength: 5 }) });
const isoDay = fc.date({ min: new Date(Date.UTC(1950, 0, 1)), max: new Date(Date.UTC(2049, 11, 31)), noInvalidDate: true }).map((d) => d.toISOString().slice(0, 10));
const validFit = fc.record(
  {
    frequency: fc.constantFrom(...FREQUENCIES),
    assets: fc.oneof(fc.constant('all' as const), fc.uniqueArray(NAME, { minLength: 1, maxLength: 8 })),
    returns: fc.constant('excess' as const),
    riskfree: NAME,
    model: linearModel,
    estimator,
    label: fc.string({ maxLength: 20 }),
    start: fc.constant('1990-01-31'),
    end: isoDay.filter((d) => d >= '1990-01-31'),
    backtest: fc.record({ window: fc.integer({ min: 2, max: 200 }), step: fc.integer({ min: 1, max: 12 }), horizon: fc.integer({ min: 1, max: 12 }), expanding: fc.boolean() }, { requiredKeys: ['window'] }),
  },
  { requiredKeys: ['riskfree', 'model', 'returns'] },
);
const validCompare = fc.record({
  frequency: fc.constantFrom(...FREQUENCIES),
  returns: fc.constant('excess' as const),
  riskfree: NAME,
  // Each model of a comparison needs its own label (a clash is refused, naming both entries):
  // several entries carry distinct labels; a lone entry may leave its label to the default.
  compare: fc.oneof(
    fc.uniqueArray(fc.record({ label: fc.string({ maxLength: 12 }), model: linearModel, estimator }), { minLength: 1, maxLength: 4, selector: (e) => e.label }),
    fc.tuple(fc.record({ model: linearModel, estimator }, { requiredKeys: ['model'] })),
  ),
  bootstrap: fc.record({ replications: fc.integer({ min: 10, max: 999 }), block: fc.oneof(fc.integer({ min: 1, max: 24 }), fc.constant('auto' as const)), seed: fc.integer({ min: 0, max: 2 ** 31 - 1 }) }, { requiredKeys: [] }),
});

// ---------- mutations
type Json = unknown;
const hostileValue: fc.Arbitrary<Json> = fc.oneof(
  fc.jsonValue({ maxDepth: 3 }),
  fc.constantFrom(NaN, Infinity, -Infinity, -0, 1e308 * 10, 2 ** 53 + 1, '', ' ', '\u0000', 'auto', 'all', 'gmm', 'linear', 'consumption', '2023-02-30', '0000-00-00', '__proto__', 'constructor', [], {}, null, undefined, true),
  fc.constant(Array.from({ length: 100_000 }, (_, i) => `a${i}`)),
  fc.constant('x'.repeat(1 << 20)),
  fc.integer({ min: 1, max: 2000 }).map((d) => {
    let v: Json = 1;
    for (let i = 0; i < d; i++) v = [v];
    return v;
  }),
);
const mutationOp = fc.oneof(
  fc.record({ op: fc.constant('delete' as const), at: fc.nat() }),
  fc.record({ op: fc.constant('set' as const), at: fc.nat(), value: hostileValue }),
  fc.record({ op: fc.constant('extra' as const), at: fc.nat(), key: fc.constantFrom('colour', '__proto__', 'constructor', 'toString', '', 'Model', 'kind '), value: hostileValue }),
  fc.record({ op: fc.constant('retype' as const), at: fc.nat() }),
);

/** Every (parent, key) in a JSON tree, the root's own keys first. */
function slots(v: Json): [Record<string, Json> | Json[], string | number][] {
  const out: [Record<string, Json> | Json[], string | number][] = [];
  const walk = (x: Json) => {
    if (Array.isArray(x)) x.forEach((c, i) => (out.push([x, i]), walk(c)));
    else if (typeof x === 'object' && x !== null) for (const [k, c] of Object.entries(x)) (out.push([x as Record<string, Json>, k]), walk(c));
  };
  walk(v);
  return out;
}

type Op = typeof mutationOp extends fc.Arbitrary<infer O> ? O : never;
function mutateSpec(spec: Json, m: Op): Json {
  const copy = JSON.parse(JSON.stringify(spec)) as Json;
  const all = slots(copy);
  if (all.length === 0) return copy;
  const [parent, key] = all[m.at % all.length];
  const p = parent as Record<string | number, Json>;
  switch (m.op) {
    case 'delete':
      if (Array.isArray(parent)) parent.splice(key as number, 1);
      else delete p[key];
      break;
    case 'set':
      p[key] = m.value;
      break;
    case 'extra': {
      const objects = all.map(([par, k]) => (par as Record<string | number, Json>)[k]).filter((x) => typeof x === 'object' && x !== null && !Array.isArray(x)) as Record<string, Json>[];
      const target = objects.length ? objects[m.at % objects.length] : (copy as Record<string, Json>);
      Object.defineProperty(target, m.key, { value: m.value, enumerable: true, configurable: true, writable: true });
      break;
    }
    case 'retype': {
      const v = p[key];
      p[key] = typeof v === 'number' ? String(v) : typeof v === 'string' ? Number(v) : typeof v === 'boolean' ? (v ? 1 : 0) : Array.isArray(v) ? { ...v } : v === null ? 0 : [v];
      break;
    }
  }
  return copy;
}

const charMutation = fc.record({ at: fc.double({ min: 0, max: 1, noNaN: true }), del: fc.integer({ min: 0, max: 3 }), ins: fc.constantFrom('', '"', ',', '{', '}', '[', ']', ':', '0', '-', 'e', 'null', 'true', '1e999', '\\u0000', ' ') });

const RUNS = { json: 3000, anything: 2000, mutatedFit: 3000, mutatedCompare: 1500, text: 6000, valid: 500 };
const settings = (k: number, numRuns: number) => ({ seed: SEED + 100 + k, numRuns, endOnFailure: true });

describe('fuzzing the spec validator', () => {
  it(`valid generated specs are accepted (${RUNS.valid} fit + ${RUNS.valid} comparison specs)`, () => {
    fc.assert(fc.property(validFit, (s) => {
      expect(check(s)).toBe('accepted');
    }), settings(0, RUNS.valid));
    fc.assert(fc.property(validCompare, (s) => {
      expect(check(s)).toBe('accepted');
    }), settings(1, RUNS.valid));
  });

  it(`arbitrary JSON (${RUNS.json} values) and arbitrary JavaScript values (${RUNS.anything})`, () => {
    fc.assert(fc.property(fc.jsonValue({ maxDepth: 6 }), (v) => void check(v)), settings(2, RUNS.json));
    const anything = fc.anything({ maxDepth: 4, withBoxedValues: true, withMap: true, withSet: true, withNullPrototype: true, withBigInt: true, withDate: true, withTypedArray: true, withSparseArray: true, withObjectString: true });
    fc.assert(fc.property(fc.oneof(anything, anything.map((a) => ({ compare: a })), anything.map((a) => ({ model: a, riskfree: 'RF' }))), (v) => void check(v)), settings(3, RUNS.anything));
  });

  it(`valid specs with one structural mutation (${RUNS.mutatedFit} fit, ${RUNS.mutatedCompare} comparison)`, () => {
    fc.assert(fc.property(validFit, mutationOp, (s, m) => void check(mutateSpec(s, m))), settings(4, RUNS.mutatedFit));
    fc.assert(fc.property(validCompare, mutationOp, (s, m) => void check(mutateSpec(s, m))), settings(5, RUNS.mutatedCompare));
  }, 120_000);

  it(`valid spec texts with one character mutation (${RUNS.text})`, () => {
    let parsed = 0;
    fc.assert(
      fc.property(fc.oneof(validFit, validCompare), charMutation, (s, m) => {
        const text = JSON.stringify(s);
        const at = Math.floor(m.at * (text.length + 1));
        const mutated = text.slice(0, at) + m.ins + text.slice(at + m.del);
        let v: unknown;
        try {
          v = JSON.parse(mutated);
        } catch {
          return; // not JSON: the CLI and the bridge refuse it before the validator
        }
        parsed++;
        check(v);
      }),
      settings(6, RUNS.text),
    );
    console.log(`[robustness] fuzz spec, text mutations: ${RUNS.text} tried, ${parsed} still JSON and validated`);
  });

  it('names every estimator method and model kind it refuses', () => {
    // a fixed check of the cross-key rules, so the message property above is not vacuous
    for (const method of METHODS.filter((m) => m !== 'gmm')) {
      for (const kind of MODEL_KINDS.filter((k) => k !== 'linear')) {
        expect(() => parseFitSpec({ returns: kind === 'linear-gross' || kind === 'consumption' ? 'gross' : 'excess', riskfree: 'RF', model: { kind, factors: kind === 'consumption' ? [] : ['F'], ...(kind === 'consumption' ? { consumption: 'C' } : {}) }, estimator: { method } })).toThrow(/spec\.estimator\.method: /);
      }
    }
  });
});
