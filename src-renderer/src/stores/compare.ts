/** A comparison run: several models on one sample. */
import { defineStore } from 'pinia';
import type { CompareResult } from '../../../shared/results.js';
import type { RequestOf } from '../../../shared/bridge/index.js';
import { bridge } from '../bridge/index.js';
import { toUiError } from '../lib/errors.js';
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
      this.controller?.abort();
      const ac = new AbortController();
      this.controller = ac;
      this.running = true;
      this.progress = 0;
      this.error = null;
      try {
        const result = await bridge().compare({ spec } as RequestOf<'compare'>, {
          signal: ac.signal,
          onProgress: (p) => {
            this.progress = p.total > 0 ? p.done / p.total : 0;
          },
        });
        if (this.controller !== ac) return undefined;
        this.result = result;
        this.progress = 1;
        return result;
      } catch (e) {
        if (this.controller === ac) this.error = toUiError(e);
        return undefined;
      } finally {
        if (this.controller === ac) {
          this.running = false;
          this.controller = null;
        }
      }
    },
    cancel(): void {
      this.controller?.abort();
    },
  },
});
