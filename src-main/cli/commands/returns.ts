/**
 * `deflator returns --db DB --frequency F`: the return table (gross, net, log, excess or
 * total-return index) of the stored assets (prices or returns), as a readable table, CSV
 * or JSON. --riskfree gives excess returns, and the total returns of assets stored as
 * excess returns (R = R^e + R^f).
 */
import type { Command } from 'commander';
import { FREQUENCIES, type Frequency } from '../../../shared/data.js';
import { CSV_EOL, csvLine } from '../../../shared/report/csv.js';
import { DeflatorError } from '../../../shared/errors.js';
import { RETURN_KINDS, returnsTable, type ReturnKind, type ReturnsTable } from '../../../shared/returns/index.js';
import { textTable } from '../../data/summary.js';
import { Store } from '../../store/store.js';
import { out } from '../terminal.js';

interface ReturnsFlags {
  db: string;
  frequency: string;
  kind: string;
  riskfree?: string;
  assets?: string;
  dayCount: string;
  csv?: boolean;
  json?: boolean;
}

function pick<T extends string>(flag: string, value: string, allowed: readonly T[]): T {
  if (!(allowed as readonly string[]).includes(value)) throw new DeflatorError('INPUT_INVALID', `${flag}: "${value}" is not one of ${allowed.join(', ')}`, `pass ${flag} ${allowed.join('|')}`);
  return value as T;
}

/** CSV: one row per period, one column per asset; shortest round-trip decimals; empty where missing (the one CSV cell writer, shared/report/csv.ts). */
export function returnsCsv(t: ReturnsTable): string {
  const names = Object.keys(t.series);
  const lines = [csvLine(['period', ...names])];
  t.periods.forEach((p, i) => lines.push(csvLine([p, ...names.map((n) => t.series[n][i])])));
  return `${lines.join(CSV_EOL)}${CSV_EOL}`;
}

function readable(t: ReturnsTable): string {
  const names = Object.keys(t.series);
  const head = `${t.kind} returns, ${t.frequency}: ${t.periods.length} periods${t.sample.T ? `; common sample ${t.sample.first} to ${t.sample.last}, T = ${t.sample.T}` : '; no common sample'}`;
  const rows = t.periods.map((p, i) => [p, ...names.map((n) => (t.series[n][i] === null ? '' : (t.series[n][i] as number).toFixed(6)))]);
  const notes = [
    ...t.sample.dropped.map((d) => `dropped ${d.asset}: ${d.reason}`),
    ...t.sample.flags.map((f) => `${f.asset} ${f.period}: ${f.note}`),
  ];
  return [head, '', textTable(['period', ...names], rows), ...(notes.length ? ['', ...notes] : [])].join('\n');
}

export function register(program: Command): void {
  program
    .command('returns')
    .description('compute returns from the stored prices and dividends (or stored returns) at a frequency (table by default, or --csv / --json)')
    .requiredOption('--db <path>', 'database file')
    .requiredOption('--frequency <f>', FREQUENCIES.join(' | '))
    .option('--kind <kind>', RETURN_KINDS.join(' | '), 'net')
    .option('--riskfree <name>', 'risk-free series: for excess returns, and for the total returns of assets stored as excess returns')
    .option('--assets <names>', 'comma-separated asset names (default: every stored asset)')
    .option('--day-count <rule>', 'risk-free yields: periods (dt = 1/periods per year) or actual365', 'periods')
    .option('--csv', 'print CSV (period, then one column per asset)')
    .option('--json', 'print JSON {frequency, kind, periods, series, sample}')
    .action((o: ReturnsFlags) => {
      const frequency = pick<Frequency>('--frequency', o.frequency, FREQUENCIES);
      const kind = pick<ReturnKind>('--kind', o.kind, RETURN_KINDS);
      const dayCount = pick('--day-count', o.dayCount, ['periods', 'actual365'] as const);
      if (o.csv && o.json) throw new DeflatorError('INPUT_INVALID', '--csv and --json both given', 'choose one output format');
      const store = new Store(o.db, { mustExist: true, access: 'read' });
      try {
        const assets = o.assets ? o.assets.split(',').map((s) => s.trim()).filter(Boolean) : undefined;
        const histories = store.loadAssets(assets);
        let riskfree;
        if (o.riskfree) {
          [riskfree] = store.loadSeries([o.riskfree]);
          if (riskfree.kind !== 'riskfree') throw new DeflatorError('INPUT_INVALID', `series "${o.riskfree}" is of kind ${riskfree.kind}, not riskfree`, 'name a risk-free series, or re-import it with --kind riskfree');
        }
        const t = returnsTable(histories, { frequency, kind, dayCount, ...(riskfree ? { riskfree } : {}) });
        if (o.json) out(`${JSON.stringify(t)}\n`);
        else if (o.csv) out(returnsCsv(t));
        else out(`${readable(t)}\n`);
      } finally {
        store.close();
      }
    });
}
