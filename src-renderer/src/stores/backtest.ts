/** A back-test run: progress over the windows, cancel, the result. */
import { defineStore } from 'pinia';
import type { BacktestResult } from '../../../shared/results.js';
import type { FitSpecInput } from '../../../shared/spec.js';
import { bridge } from '../bridge/index.js';
import { toUiError } from '../lib/errors.js';
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
      this.controller?.abort();
      const ac = new AbortController();
      this.controller = ac;
      this.running = true;
      this.cancelled = false;
      this.done = 0;
      this.total = 0;
      this.stage = 'starting';
      this.error = null;
      try {
        const result = await bridge().backtest(
          { spec },
          {
            signal: ac.signal,
            onProgress: (p) => {
              this.done = p.done;
              this.total = p.total;
              this.stage = p.stage ?? 'windows';
            },
          },
        );
        if (this.controller !== ac) return undefined;
        this.result = result;
        this.total = Math.max(this.total, 1);
        this.done = this.total;
        this.stage = 'done';
        return result;
      } catch (e) {
        if (this.controller === ac) {
          const err = toUiError(e);
          if (err.code === 'CANCELLED') this.cancelled = true;
          else this.error = err;
        }
        return undefined;
      } finally {
        if (this.controller === ac) {
          this.running = false;
          this.controller = null;
        }
      }
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
