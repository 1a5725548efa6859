/** One model fit: the request, its progress, the result or the error, and how long it took. */
import { defineStore } from 'pinia';
import type { FitResult } from '../../../shared/results.js';
import type { FitSpecInput } from '../../../shared/spec.js';
import type { PricingErrorSort } from '../../../shared/charts/index.js';
import { bridge } from '../bridge/index.js';
import { runLatest } from './latest-task.js';
import type { UiError } from '../lib/errors.js';

const now = (): number => (typeof performance !== 'undefined' ? performance.now() : Date.now());

export const useFitStore = defineStore('fit', {
  state: () => ({
    result: null as FitResult | null,
    spec: null as FitSpecInput | null,
    running: false,
    progress: 0,
    error: null as UiError | null,
    /** ms: request sent, reply received (the engine returned). */
    requestedAt: 0,
    repliedAt: 0,
    sort: 'input' as PricingErrorSort,
    descending: false,
    annual: true,
    controller: null as AbortController | null,
  }),
  getters: {
    engineMs: (s): number => (s.repliedAt > s.requestedAt ? s.repliedAt - s.requestedAt : 0),
  },
  actions: {
    async run(spec: FitSpecInput): Promise<FitResult | undefined> {
      this.progress = 0;
      this.error = null;
      this.spec = spec;
      this.requestedAt = now();
      const onProgress = (p: { done: number; total: number }) => {
        this.progress = p.total > 0 ? p.done / p.total : 0;
      };
      return runLatest(this, (signal) => bridge().fit({ spec }, { signal, onProgress }), {
        result: (r) => {
          this.repliedAt = now();
          this.result = r;
          this.progress = 1;
        },
        error: (e) => {
          this.error = e;
        },
      });
    },
    cancel(): void {
      this.controller?.abort();
    },
    setSort(sort: PricingErrorSort): void {
      if (this.sort === sort) this.descending = !this.descending;
      else {
        this.sort = sort;
        this.descending = sort === 'absAlpha';
      }
    },
  },
});
