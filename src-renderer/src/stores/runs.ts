/** Run history: the recorded runs, one opened run, replay, export, and two runs side by side. */
import { defineStore } from 'pinia';
import type { ExportFormat } from '../../../shared/report/formats.js';
import type { RunRecord, RunSummary, StaleItem } from '../../../shared/records/run-record.js';
import type { ReplayReport } from '../../../shared/records/replay-report.js';
import type { RequestOf } from '../../../shared/bridge/index.js';
import { diffRuns, type RunDiff } from '../../../shared/report/run-diff.js';
import { bridge } from '../bridge/index.js';
import { downloadBlob } from '../lib/download.js';
import { toUiError } from '../lib/errors.js';
import type { UiError } from '../lib/errors.js';

export type RunFilter = RequestOf<'runs'>;

/** base64 -> bytes without Node's Buffer. */
export function fromBase64(b64: string): Uint8Array<ArrayBuffer> {
  const bin = atob(b64);
  const out = new Uint8Array(new ArrayBuffer(bin.length));
  for (let i = 0; i < bin.length; i++) out[i] = bin.charCodeAt(i);
  return out;
}

export const useRunsStore = defineStore('runs', {
  state: () => ({
    list: [] as RunSummary[],
    filter: { model: '', from: '', to: '' } as { model: string; from: string; to: string },
    loading: false,
    error: null as UiError | null,
    opened: null as { record: RunRecord; staleItems: StaleItem[] } | null,
    replay: null as ReplayReport | null,
    replaying: false,
    exporting: false,
    /** Ids ticked for "compare two runs" (at most two, oldest tick dropped). */
    picked: [] as number[],
    diff: null as RunDiff | null,
  }),
  actions: {
    request(): RunFilter {
      const f: RunFilter = {};
      if (this.filter.model.trim()) f.model = this.filter.model.trim();
      if (/^\d{4}-\d{2}-\d{2}$/.test(this.filter.from)) f.from = this.filter.from;
      if (/^\d{4}-\d{2}-\d{2}$/.test(this.filter.to)) f.to = this.filter.to;
      return f;
    },
    async load(): Promise<void> {
      this.loading = true;
      this.error = null;
      try {
        this.list = await bridge().runs(this.request());
        this.picked = this.picked.filter((id) => this.list.some((r) => r.id === id));
      } catch (e) {
        this.error = toUiError(e);
      } finally {
        this.loading = false;
      }
    },
    async open(id: number): Promise<RunRecord | undefined> {
      this.error = null;
      this.replay = null;
      try {
        this.opened = await bridge().run({ id });
        return this.opened.record;
      } catch (e) {
        this.error = toUiError(e);
        return undefined;
      }
    },
    async remove(id: number): Promise<void> {
      this.error = null;
      try {
        await bridge().deleteRun({ id });
        if (this.opened?.record.id === id) this.opened = null;
        this.picked = this.picked.filter((x) => x !== id);
        this.diff = null;
        await this.load();
      } catch (e) {
        this.error = toUiError(e);
      }
    },
    async runReplay(id: number): Promise<void> {
      this.replaying = true;
      this.error = null;
      this.replay = null;
      try {
        this.replay = await bridge().replayRun({ id });
      } catch (e) {
        this.error = toUiError(e);
      } finally {
        this.replaying = false;
      }
    },
    async exportRun(id: number, format: ExportFormat): Promise<void> {
      this.exporting = true;
      this.error = null;
      try {
        const { files } = await bridge().exportRun({ id, format });
        for (const f of files) downloadBlob(new Blob([fromBase64(f.base64)], { type: f.mime }), f.name);
      } catch (e) {
        this.error = toUiError(e);
      } finally {
        this.exporting = false;
      }
    },
    togglePick(id: number): void {
      if (this.picked.includes(id)) this.picked = this.picked.filter((x) => x !== id);
      else this.picked = [...this.picked, id].slice(-2);
      this.diff = null;
    },
    async comparePicked(): Promise<void> {
      if (this.picked.length !== 2) return;
      this.error = null;
      try {
        const [a, b] = await Promise.all([...this.picked].sort((x, y) => x - y).map((id) => bridge().run({ id })));
        this.diff = diffRuns(a.record, b.record);
      } catch (e) {
        this.error = toUiError(e);
      }
    },
  },
});
