/** A comparison run: several models on one sample. */
import { defineStore } from 'pinia';
import type { CompareResult } from '../../../shared/results.js';
import type { RequestOf } from '../../../shared/bridge/index.js';
import { bridge } from '../bridge/index.js';
import { runLatest } from './latest-task.js';
import type { UiError } from '../lib/errors.js';

export const useCompareStore = defineStore('compare', {
  state: () => ({
    result: null as CompareResult | null,
    running: false,
    progress: 0,
    error: null as UiError | null,
    controller: null as AbortController | null,
  }),
  actions: {
    async run(spec: Record<string, unknown>): Promise<CompareResult | undefined> {
      this.progress = 0;
      this.error = null;
      const onProgress = (p: { done: number; total: number }) => {
        this.progress = p.total > 0 ? p.done / p.total : 0;
      };
      return runLatest(this, (signal) => bridge().compare({ spec } as RequestOf<'compare'>, { signal, onProgress }), {
        result: (r) => {
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
  },
});
