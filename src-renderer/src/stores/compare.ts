/** A comparison run: several models on one sample; or a merged batch, ranked. */
import { defineStore } from 'pinia';
import type { CompareResult } from '../../../shared/results.js';
import type { RunSummary } from '../../../shared/records/run-record.js';
import type { BatchRanking, RankBy } from '../../../shared/batch/rank.js';
import type { RequestOf } from '../../../shared/bridge/index.js';
import { bridge } from '../bridge/index.js';
import { runLatest } from './latest-task.js';
import { toUiError, type UiError } from '../lib/errors.js';

/** Rows of a batch ranking the screen shows. */
export const BATCH_TOP = 25;

export const useCompareStore = defineStore('compare', {
  state: () => ({
    result: null as CompareResult | null,
    running: false,
    progress: 0,
    error: null as UiError | null,
    controller: null as AbortController | null,
    /** Merged batch runs in the project (newest first). */
    batches: [] as RunSummary[],
    /** The open batch's ranking; its top rows are `result`. */
    batch: null as BatchRanking | null,
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
          this.batch = null;
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
    async listBatches(): Promise<void> {
      try {
        this.batches = await bridge().runs({ kind: 'batch' });
      } catch (e) {
        this.error = toUiError(e);
      }
    },
    /** Opens a merged batch run ranked one way; the comparison table then shows its top tasks. */
    async openBatch(id: number, rankBy: RankBy = 'hj'): Promise<void> {
      this.error = null;
      try {
        const ranking = await bridge().batchRanking({ id, rankBy, top: BATCH_TOP });
        this.batch = ranking;
        this.result = Object.assign(ranking.comparison, { runId: id });
      } catch (e) {
        this.error = toUiError(e);
      }
    },
    closeBatch(): void {
      this.batch = null;
      this.result = null;
    },
  },
});
