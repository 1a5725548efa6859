/**
 * Run history for the desktop app: the bridge calls runs, run, deleteRun, replayRun and
 * exportRun on the open project database (src-main/app/handlers.ts forwards to these).
 */
import type { RunRecord, RunSummary, StaleItem } from '../../shared/records/run-record.js';
import type { ReplayReport } from '../../shared/records/replay-report.js';
import { EXPORT_MIME, type ExportFormat } from '../../shared/report/formats.js';
import { renderExport } from '../export/run-export.js';
import { DeflatorError } from '../../shared/errors.js';
import { batchRanking, type BatchRanking, type RankBy } from '../../shared/batch/rank.js';
import type { Store } from '../store/store.js';
import { replayRun, type Recompute } from './replay.js';
import { deleteRun, getRun, listRuns, staleItems, type RunFilter } from './runs.js';

export interface ExportedFile {
  name: string;
  mime: string;
  /** The file's bytes, base64 (the bridge carries JSON). */
  base64: string;
}

export class RunService {
  /**
   * @param store the open project database (a getter: the app can switch databases)
   * @param recompute how replay recomputes (the app's worker pool: poolRecompute)
   * @param pdf HTML -> PDF bytes; in Electron, pdfFromHtmlWithWebContents on a hidden window
   * @param threads the app pool's worker threads, noted in the replay report (the numbers do not depend on them)
   */
  constructor(
    private readonly store: () => Store,
    private readonly recompute: Recompute,
    private readonly pdf?: (html: string) => Promise<Buffer>,
    private readonly threads?: number,
  ) {}

  list(filter: RunFilter = {}): RunSummary[] {
    return listRuns(this.store(), filter);
  }

  get(id: number): { record: RunRecord; staleItems: StaleItem[] } {
    const store = this.store();
    const record = getRun(store, id);
    return { record, staleItems: staleItems(store, record) };
  }

  delete(id: number): { deleted: number } {
    deleteRun(this.store(), id);
    return { deleted: id };
  }

  /** Replays in the app's own pool, whatever thread count the run was computed with. */
  async replay(id: number): Promise<ReplayReport> {
    return replayRun(this.store(), id, this.recompute, this.threads === undefined ? {} : { threads: this.threads });
  }

  /** The top of one ranking of a merged batch run, for the comparison screen. */
  batchRanking(id: number, by: RankBy, top: number): BatchRanking {
    const record = getRun(this.store(), id);
    if (record.result.kind !== 'batch') {
      throw new DeflatorError('INPUT_INVALID', `run ${id} is a ${record.kind}, not a merged batch`, 'pick a run of kind batch (deflator batch merge records one)');
    }
    return batchRanking(id, record.result, by, top);
  }

  async export(id: number, format: ExportFormat): Promise<{ files: ExportedFile[] }> {
    const record = getRun(this.store(), id);
    const files = await renderExport(record, format, this.pdf);
    return { files: files.map((f) => ({ name: f.name, mime: f.name.endsWith('.txt') ? 'text/plain' : EXPORT_MIME[format], base64: f.data.toString('base64') })) };
  }
}
