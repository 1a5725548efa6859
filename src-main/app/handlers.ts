/**
 * The bridge calls implemented on the app's services. One function per entry of the call
 * table (shared/bridge/calls.ts); the `Handlers` type makes a missing one a compile error.
 */
import { rmSync } from 'node:fs';
import { CAUTION } from '../../shared/results.js';
import { DeflatorError } from '../../shared/errors.js';
import { isCompareSpec, parseCompareSpec, parseDriftSpec, parseFitSpec, parsePresentValueSpec } from '../../shared/spec.js';
import type { Handlers } from './dispatch.js';
import type { Engine, FilePolicy, Importer, ProjectData } from './ports.js';
import type { TaskRegistry } from './tasks.js';
import type { RunService } from '../runs/service.js';

export interface AppServices {
  version: string;
  /** The open project; a getter, because the Electron shell can open another database. */
  project: () => ProjectData;
  importer: () => Importer;
  engine: Engine;
  files: FilePolicy;
  tasks: TaskRegistry;
  /** Run history (src-main/runs/service.ts); absent in set-ups without a project database. */
  runs?: RunService;
}

function runService(s: AppServices): RunService {
  if (!s.runs) throw new DeflatorError('NOT_FOUND', 'run history is not available in this session', 'open a project database');
  return s.runs;
}

export function createHandlers(s: AppServices): Handlers {
  return {
    info: async () => {
      const p = s.project();
      const c = p.coverage();
      return {
        version: s.version,
        database: p.databaseName,
        caution: CAUTION,
        counts: { assets: c.assets.length, series: c.series.length, portfolios: c.portfolios.length },
      };
    },
    coverage: async () => s.project().coverage(),
    history: async (req) => s.project().history(req.asset, req.frequency),
    importFile: async (req, ctx) => {
      const file = 'path' in req.source ? s.files.check(req.source.path) : s.files.storeUpload(req.source.name, req.source.text);
      const report = await s.importer().importFile(file, req.kind, req.options ?? {}, ctx);
      return 'name' in req.source ? { ...report, file: req.source.name } : report;
    },
    previewImport: async (req) => {
      const uploaded = 'name' in req.source;
      const file = 'path' in req.source ? s.files.check(req.source.path) : s.files.storeUpload(req.source.name, req.source.text);
      try {
        const preview = await s.importer().previewFile(file, req.kind, req.options ?? {}, req.rows);
        if (!('name' in req.source)) return preview;
        // an upload's copy lives in the app's own folder: messages name the file as the user knows it
        const name = req.source.name;
        return { ...preview, file: name, ...(preview.problem ? { problem: { ...preview.problem, message: preview.problem.message.split(file).join(name) } } : {}) };
      } finally {
        // an uploaded preview is read once: its copy in the incoming folder goes again
        if (uploaded) rmSync(file, { force: true });
      }
    },
    checkSpec: async (req) => {
      if (isCompareSpec(req.spec)) return { kind: 'compare', spec: parseCompareSpec(req.spec).spec };
      return { kind: 'fit', spec: parseFitSpec(req.spec) };
    },
    samplePreview: async (req) => s.project().samplePreview(parseFitSpec(req.spec)),
    imports: async () => s.project().imports(),
    fit: async (req, ctx) => s.engine.fit(parseFitSpec(req.spec), ctx),
    backtest: async (req, ctx) => {
      const spec = parseFitSpec(req.spec);
      if (!spec.backtest) {
        throw new DeflatorError('SPEC_INVALID', 'spec.backtest: a back-test needs "backtest": {"window": W, ...}', 'set the window length (periods) in the model set-up');
      }
      return s.engine.backtest(spec, ctx);
    },
    compare: async (req, ctx) => s.engine.compare(parseCompareSpec(req.spec).spec, ctx),
    presentValue: async (req, ctx) => s.engine.presentValue(parsePresentValueSpec(req.spec), ctx),
    drift: async (req, ctx) => s.engine.drift(parseDriftSpec(req.spec), ctx),
    cancel: async (req) => ({ cancelled: s.tasks.cancel(req.taskId) }),
    runs: async (req) => runService(s).list(req),
    run: async (req) => runService(s).get(req.id),
    deleteRun: async (req) => runService(s).delete(req.id),
    replayRun: async (req) => runService(s).replay(req.id),
    batchRanking: async (req) => runService(s).batchRanking(req.id, req.rankBy, req.top),
    exportRun: async (req) => runService(s).export(req.id, req.format),
  };
}
