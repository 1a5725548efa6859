/**
 * `deflator show RUN --db DB`: one recorded run: its tables, sample header, record
 * (version, fingerprints) and whether its data is stale. --json prints the record with
 * every number exact (-0 and non-finite values tagged, docs/methods.md "Run records").
 */
import type { Command } from 'commander';
import { CAUTION } from '../../../shared/results.js';
import { toExactJson } from '../../../shared/records/exact-json.js';
import { resultToText } from '../../../shared/report/text.js';
import { getRun, parseRunId, staleItems } from '../../runs/runs.js';
import { Store } from '../../store/store.js';
import { out } from '../terminal.js';

interface ShowOptions {
  db: string;
  json?: boolean;
}

export function register(program: Command): void {
  program
    .command('show')
    .description('print one recorded run: tables, sample header, record and data fingerprints')
    .argument('<run>', 'run id (see `deflator runs`)')
    .requiredOption('--db <path>', 'project database')
    .option('--json', 'print the whole record as JSON (numbers exact)')
    .action((run: string, opts: ShowOptions) => {
      const store = new Store(opts.db, { mustExist: true, access: 'read' });
      try {
        const record = getRun(store, parseRunId(run));
        const stale = staleItems(store, record);
        if (opts.json) {
          out(`${JSON.stringify({ ...(toExactJson(record) as object), stale: stale.length > 0, staleItems: stale, caution: CAUTION }, null, 2)}\n`);
          return;
        }
        const lines = [`Run ${record.id} (${record.kind}), recorded ${record.createdAt} by deflator ${record.version}`, ''];
        lines.push(resultToText(record.result, record));
        if (stale.length) {
          lines.push('STALE: the data this run read has changed since it was recorded:');
          for (const s of stale) lines.push(`  ${s.what}: ${s.reason}`);
          lines.push(`  (deflator replay ${record.id} --db ${opts.db} shows what recomputing gives now)`);
        } else lines.push('Data: unchanged since the run (every recorded file and subject digest matches).');
        out(`${lines.join('\n')}\n`);
      } finally {
        store.close();
      }
    });
}
