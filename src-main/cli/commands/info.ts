/** `deflator info --db DB`: what the database holds (coverage per asset and series, the import log). */
import type { Command } from 'commander';
import { formatInfo } from '../../data/summary.js';
import { Store } from '../../store/store.js';
import { out } from '../terminal.js';

export function register(program: Command): void {
  program
    .command('info')
    .description('show what a database holds: assets and series with first/last date, count and gaps; portfolios; the import log')
    .requiredOption('--db <path>', 'database file')
    .option('--json', 'print everything (including every import warning) as JSON')
    .action((o: { db: string; json?: boolean }) => {
      const store = new Store(o.db, { mustExist: true, access: 'read' });
      try {
        const info = store.info();
        out(o.json ? `${JSON.stringify(info, null, 2)}\n` : `${formatInfo(info)}\n`);
      } finally {
        store.close();
      }
    });
}
