import { describe, expect, it } from 'vitest';
import { CALL_NAMES, CALLS, validateRequest } from '../../../shared/bridge/index.js';

const goodSpec = {
  frequency: 'monthly',
  assets: ['P1', 'P2', 'P3'],
  riskfree: 'RF',
  model: { kind: 'linear', factors: ['MKT'] },
};

describe('bridge request validation', () => {
  it('accepts a well-formed fit request and fills in the spec defaults', () => {
    const r = validateRequest('fit', { spec: goodSpec });
    expect(r.ok).toBe(true);
    if (r.ok) {
      const spec = (r.request as { spec: { estimator: { stage: string; lags: unknown } } }).spec;
      expect(spec.estimator.stage).toBe('second');
      expect(spec.estimator.lags).toBe('auto');
    }
  });

  it('rejects an unknown call by name, listing the known ones', () => {
    const r = validateRequest('dropTables', {});
    expect(r.ok).toBe(false);
    if (!r.ok) {
      expect(r.error.code).toBe('UNKNOWN_CALL');
      expect(r.error.hint).toContain('fit');
    }
    // prototype keys are not calls
    expect(validateRequest('constructor', {}).ok).toBe(false);
    expect(validateRequest('__proto__', {}).ok).toBe(false);
    expect(validateRequest(42, {}).ok).toBe(false);
  });

  it('rejects wrong types', () => {
    const r = validateRequest('history', { asset: 7 });
    expect(r.ok).toBe(false);
    if (!r.ok) {
      expect(r.error.code).toBe('BAD_REQUEST');
      expect(r.error.message).toContain('history.asset');
    }
    const s = validateRequest('fit', { spec: { ...goodSpec, frequency: 'hourly' } });
    expect(s.ok).toBe(false);
    if (!s.ok) {
      expect(s.error.code).toBe('SPEC_INVALID');
      expect(s.error.message).toContain('fit.spec.frequency');
    }
  });

  it('rejects extra keys at the top and inside the spec', () => {
    const top = validateRequest('coverage', { everything: true });
    expect(top.ok).toBe(false);
    if (!top.ok) expect(top.error.message).toMatch(/unknown key\(s\) "everything"/);
    const inner = validateRequest('fit', { spec: { ...goodSpec, model: { kind: 'linear', factors: ['MKT'], colour: 'red' } } });
    expect(inner.ok).toBe(false);
    if (!inner.ok) expect(inner.error.message).toContain('fit.spec.model');
    const src = validateRequest('importFile', { kind: 'prices', source: { path: '/x.csv', text: 'a' } });
    expect(src.ok).toBe(false);
  });

  it('rejects missing fields', () => {
    const r = validateRequest('importFile', { kind: 'prices' });
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.error.message).toContain('importFile.source');
    const m = validateRequest('fit', {});
    expect(m.ok).toBe(false);
    const c = validateRequest('cancel', {});
    expect(c.ok).toBe(false);
  });

  it('rejects non-object bodies and malformed task ids', () => {
    for (const body of [null, 'fit', 3, [1, 2], true]) {
      const r = validateRequest('fit', body);
      expect(r.ok, JSON.stringify(body)).toBe(false);
    }
    expect(validateRequest('cancel', { taskId: '../../etc' }).ok).toBe(false);
    expect(validateRequest('cancel', { taskId: 'a'.repeat(65) }).ok).toBe(false);
    expect(validateRequest('cancel', { taskId: 'tk_1-a' }).ok).toBe(true);
  });

  it('treats an absent body as an empty request for calls that take no arguments', () => {
    expect(validateRequest('info', undefined).ok).toBe(true);
    expect(validateRequest('history', undefined).ok).toBe(false);
  });

  it('declares every call once, with a summary', () => {
    expect(new Set(CALL_NAMES).size).toBe(CALL_NAMES.length);
    for (const n of CALL_NAMES) {
      expect(CALLS[n].summary.length).toBeGreaterThan(5);
      expect(n).toMatch(/^[a-z][A-Za-z]+$/);
    }
    expect(CALLS.fit.task).toBe(true);
    expect(CALLS.info.task).toBe(false);
  });
});
