/**
 * `deflator runs --db DB`: the recorded runs, newest first, with a STALE mark where the
 * data a run read has changed since. Filters by model, kind and recording date;
 * `--delete RUN` removes one record; `--record FILE` records a result that was saved
 * because its run could not be recorded then (src-main/runs/unrecorded.ts).
 */
import type { Command } from 'commander';
import { DeflatorError } from '../../../shared/errors.js';
import { factorCountText, isRunKind, RUN_KINDS, type RunSummary } from '../../../shared/records/run-record.js';
import { alignTable } from '../../../shared/report/text.js';
import { isCalendarDate } from '../../../shared/returns/periods.js';
import { deleteRun, listRuns, parseRunId, type RunFilter } from '../../runs/runs.js';
import { Store } from '../../store/store.js';
import { recordSaved } from '../../runs/unrecorded.js';
import { out } from '../terminal.js';

interface RunsOptions {
  db: string;
  json?: boolean;
  model?: string;
  kind?: string;
  from?: string;
  to?: string;
  delete?: string;
  record?: string;
}

export function formatRuns(runs: RunSummary[]): string {
  if (!runs.length) return 'No recorded runs.';
  const rows = runs.map((r) => [
    String(r.id),
    r.kind,
    r.createdAt.replace('T', ' ').slice(0, 19),
    r.label,
    `${r.start} to ${r.end}`,
    String(r.T),
    String(r.N),
    factorCountText(r),
    r.stale ? 'STALE' : 'ok',
  ]);
  const lines = alignTable(['run', 'kind', 'recorded (UTC)', 'model', 'sample', 'T', 'N', 'K', 'data'], rows, '', [true, false, false, false, false, true, true, true, false]).split('\n');
  for (const r of runs.filter((x) => x.stale)) {
    lines.push('', `run ${r.id} is stale:`);
    for (const s of r.staleItems) lines.push(`  ${s.what}: ${s.reason}`);
  }
  return lines.join('\n');
}

export function register(program: Command): void {
  program
    .command('runs')
    .description('list the recorded runs (fits, back-tests, comparisons), newest first; STALE where their data changed since')
    .requiredOption('--db <path>', 'project database')
    .option('--model <text>', 'only runs whose model label or kind contains this text')
    .option('--kind <kind>', 'only fit | backtest | compare | batch runs')
    .option('--from <date>', 'only runs recorded on or after this date (YYYY-MM-DD)')
    .option('--to <date>', 'only runs recorded on or before this date (YYYY-MM-DD)')
    .option('--delete <run>', 'delete this run record (the data stays)')
    .option('--record <file>', 'record a result saved when its run could not be recorded (the data must be unchanged since)')
    .option('--json', 'print the list as JSON')
    .action((opts: RunsOptions) => {
      const store = new Store(opts.db, { mustExist: true, access: opts.delete === undefined && opts.record === undefined ? 'read' : 'write' });
      try {
        if (opts.record !== undefined) {
          const run = recordSaved(store, opts.record);
          if (opts.json) out(`${JSON.stringify({ recorded: run.id, file: opts.record })}\n`);
          else out(`Recorded ${opts.record} as run ${run.id} (deflator show ${run.id} --db ${opts.db}).\n`);
          return;
        }
        if (opts.delete !== undefined) {
          const id = parseRunId(opts.delete);
          deleteRun(store, id);
          if (opts.json) out(`${JSON.stringify({ deleted: id })}\n`);
          else out(`Deleted run ${id}.\n`);
          return;
        }
        if (opts.kind !== undefined && !isRunKind(opts.kind)) throw new DeflatorError('INPUT_INVALID', `--kind ${opts.kind}: not a run kind`, `use --kind ${RUN_KINDS.join(', ')}`);
        for (const [k, v] of [['--from', opts.from], ['--to', opts.to]] as const) {
          if (v !== undefined && !isCalendarDate(v)) throw new DeflatorError('INPUT_INVALID', `${k} ${v}: expected a calendar date as YYYY-MM-DD`, `e.g. ${k} 2026-01-31`);
        }
        const filter: RunFilter = {};
        if (opts.model) filter.model = opts.model;
        if (opts.kind && isRunKind(opts.kind)) filter.kind = opts.kind;
        if (opts.from) filter.from = opts.from;
        if (opts.to) filter.to = opts.to;
        const runs = listRuns(store, filter);
        out(opts.json ? `${JSON.stringify(runs, null, 2)}\n` : `${formatRuns(runs)}\n`);
      } finally {
        store.close();
      }
    });
}
