/**
 * Last line of defence (METHODS 7): a result never carries NaN or Infinity. Scans every
 * number of a plain result object and throws naming the first offending field.
 */
import { DeflatorError } from '../errors.js';

export function assertAllFinite(value: unknown, path = 'result'): void {
  if (typeof value === 'number') {
    if (!Number.isFinite(value))
      throw new DeflatorError('SINGULAR', `${path} is ${value}: a computation on this sample broke down (a near-singular matrix or a degenerate series)`, 'check the series named in the sample notes, use fewer test assets or factors, or a longer sample');
    return;
  }
  if (value === null || typeof value !== 'object') return;
  if (ArrayBuffer.isView(value)) {
    const arr = value as unknown as ArrayLike<number>;
    // the path is written only for the element that fails (a series has thousands)
    for (let i = 0; i < arr.length; i++) if (!Number.isFinite(arr[i])) assertAllFinite(arr[i], `${path}[${i}]`);
    return;
  }
  if (Array.isArray(value)) {
    for (let i = 0; i < value.length; i++) {
      const v: unknown = value[i];
      if (typeof v === 'number') {
        if (!Number.isFinite(v)) assertAllFinite(v, `${path}[${i}]`);
      } else if (v !== null && typeof v === 'object') assertAllFinite(v, `${path}[${i}]`);
    }
    return;
  }
  for (const [k, v] of Object.entries(value as Record<string, unknown>)) assertAllFinite(v, `${path}.${k}`);
}
