/** A back-test run: progress over the windows, cancel, the result. */
import { defineStore } from 'pinia';
import type { BacktestResult } from '../../../shared/results.js';
import type { FitSpecInput } from '../../../shared/spec.js';
import { bridge } from '../bridge/index.js';
import { runLatest } from './latest-task.js';
import type { UiError } from '../lib/errors.js';

export const useBacktestStore = defineStore('backtest', {
  state: () => ({
    result: null as BacktestResult | null,
    running: false,
    done: 0,
    total: 0,
    stage: '',
    error: null as UiError | null,
    cancelled: false,
    controller: null as AbortController | null,
    /** Parameters whose paths are drawn (empty: the first six). */
    shown: [] as string[],
  }),
  getters: {
    fraction: (s): number => (s.total > 0 ? Math.min(1, s.done / s.total) : 0),
  },
  actions: {
    async run(spec: FitSpecInput): Promise<BacktestResult | undefined> {
      this.cancelled = false;
      this.done = 0;
      this.total = 0;
      this.stage = 'starting';
      this.error = null;
      const onProgress = (p: { done: number; total: number; stage?: string }) => {
        this.done = p.done;
        this.total = p.total;
        this.stage = p.stage ?? 'windows';
      };
      return runLatest(this, (signal) => bridge().backtest({ spec }, { signal, onProgress }), {
        result: (r) => {
          this.result = r;
          this.total = Math.max(this.total, 1);
          this.done = this.total;
          this.stage = 'done';
        },
        error: (e) => {
          if (e.code === 'CANCELLED') this.cancelled = true;
          else this.error = e;
        },
      });
    },
    /** Shows or hides one parameter's path; `current` is what is drawn now (the default six when none were chosen). */
    toggleParam(name: string, current: string[]): void {
      if (this.shown.length === 0) this.shown = [...current];
      const i = this.shown.indexOf(name);
      if (i >= 0) this.shown.splice(i, 1);
      else this.shown.push(name);
    },
    cancel(): void {
      if (this.controller) {
        this.cancelled = true;
        this.controller.abort();
      }
    },
  },
});
