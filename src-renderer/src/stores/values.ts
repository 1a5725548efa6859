/**
 * The present-value screen: the dividend-price decomposition and the drift split, each a
 * recorded run; the requests, their progress, results and errors.
 */
import { defineStore } from 'pinia';
import type { DriftResult, PresentValueResult } from '../../../shared/results.js';
import type { RunTag } from '../../../shared/records/run-record.js';
import type { DriftSpecInput, PresentValueSpecInput } from '../../../shared/spec.js';
import { bridge } from '../bridge/index.js';
import { runLatest } from './latest-task.js';
import type { UiError } from '../lib/errors.js';

interface Holder {
  running: boolean;
  controller: AbortController | null;
}

export const useValuesStore = defineStore('values', {
  state: () => ({
    /** The decomposition's inputs as the form holds them. */
    mode: 'aggregate' as 'aggregate' | 'asset',
    asset: '',
    /** Assets of the aggregate; empty: every asset stored with prices. */
    members: [] as string[],
    startYear: '',
    endYear: '',
    lags: 'auto' as string,
    /** The drift split's inputs. */
    driftAssets: [] as string[],
    frequency: 'monthly' as DriftSpecInput['frequency'],
    pv: null as (PresentValueResult & RunTag) | null,
    drift: null as (DriftResult & RunTag) | null,
    pvTask: { running: false, controller: null } as Holder,
    driftTask: { running: false, controller: null } as Holder,
    pvError: null as UiError | null,
    driftError: null as UiError | null,
  }),
  getters: {
    pvSpec(s): PresentValueSpecInput {
      const lags = s.lags === 'auto' || s.lags.trim() === '' ? 'auto' : Number(s.lags);
      return {
        analysis: 'present-value',
        ...(s.mode === 'asset' ? { asset: s.asset } : { aggregate: true, ...(s.members.length ? { assets: [...s.members] } : {}) }),
        ...(s.startYear.trim() ? { start: s.startYear.trim() } : {}),
        ...(s.endYear.trim() ? { end: s.endYear.trim() } : {}),
        lags,
      };
    },
    driftSpec(s): DriftSpecInput {
      const lags = s.lags === 'auto' || s.lags.trim() === '' ? 'auto' : Number(s.lags);
      return { analysis: 'drift', ...(s.driftAssets.length ? { assets: [...s.driftAssets] } : {}), frequency: s.frequency, lags };
    },
  },
  actions: {
    async runPresentValue(): Promise<void> {
      this.pvError = null;
      const spec = this.pvSpec;
      await runLatest(this.pvTask, (signal) => bridge().presentValue({ spec }, { signal }), {
        result: (r) => (this.pv = r),
        error: (e) => (this.pvError = e),
      });
    },
    async runDrift(): Promise<void> {
      this.driftError = null;
      const spec = this.driftSpec;
      await runLatest(this.driftTask, (signal) => bridge().drift({ spec }, { signal }), {
        result: (r) => (this.drift = r),
        error: (e) => (this.driftError = e),
      });
    },
    /** A recorded run opened from the run history. */
    show(result: PresentValueResult | DriftResult): void {
      if (result.kind === 'present-value') this.pv = result;
      else this.drift = result;
    },
  },
});
