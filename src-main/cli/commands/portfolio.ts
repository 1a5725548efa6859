/**
 * `deflator portfolio build|list`: test-asset portfolios sorted on a characteristic of
 * the stored histories (docs/methods.md, test-asset portfolios), stored as named return
 * series that any spec can use as test assets (`"assets": ["mom.q1", ..., "mom.q5"]`).
 * The sort rules are stored with every portfolio. All buckets of a sort are written in
 * one transaction: either all of them or none.
 */
import type { Command } from 'commander';
import { FREQUENCIES } from '../../../shared/data.js';
import { DeflatorError } from '../../../shared/errors.js';
import { CHARACTERISTICS, parseSortSpec, sortPortfolios, type SortResult } from '../../../shared/portfolios/index.js';
import { alignTable } from '../../../shared/report/text.js';
import { fixed } from '../../../shared/report/numbers.js';
import { CAUTION } from '../../../shared/results.js';
import { Store } from '../../store/store.js';
import { positiveInt } from './backtest.js';
import { out } from '../terminal.js';

interface BuildFlags {
  db: string;
  sort: string;
  groups: string;
  weight: string;
  frequency: string;
  rebalance?: string;
  name: string;
  lookback?: string;
  skip?: string;
  minAssets?: string;
  assets?: string;
  start?: string;
  end?: string;
  replace?: boolean;
  json?: boolean;
}

function summary(res: SortResult): string {
  const out: string[] = [];
  const first = res.series[0];
  out.push(`${res.series.length} portfolios, ${first.frequency}, ${first.periods[0]} to ${first.periods[first.periods.length - 1]} (${first.periods.length} periods), ${res.formations.length} sorts`);
  out.push('');
  const rows = res.series.map((s, g) => {
    const v = Array.from(s.net).filter((x) => !Number.isNaN(x));
    const mean = v.reduce((a, x) => a + x, 0) / Math.max(1, v.length);
    const sd = Math.sqrt(v.reduce((a, x) => a + (x - mean) ** 2, 0) / Math.max(1, v.length - 1));
    const counts = res.formations.map((f) => f.counts[g]);
    return [s.name, String(v.length), String(s.periods.length - v.length), fixed(100 * mean, 3), fixed(100 * sd, 3), `${Math.min(...counts)}-${Math.max(...counts)}`];
  });
  out.push(alignTable(['portfolio', 'returns', 'missing', 'mean %', 's.d. %', 'assets per sort'], rows));
  out.push('');
  out.push(`Rules: ${res.rules}`);
  out.push('');
  out.push(CAUTION);
  return `${out.join('\n')}\n`;
}

export function register(program: Command): void {
  const cmd = program.command('portfolio').description('build test-asset portfolios by sorting on a characteristic, and list them');
  cmd
    .command('build')
    .description('sort the stored assets into quantile portfolios and store them as named return series')
    .requiredOption('--db <path>', 'project database')
    .requiredOption('--sort <characteristic>', CHARACTERISTICS.join(' | '))
    .requiredOption('--name <prefix>', 'name prefix: the portfolios are PREFIX.q1 .. PREFIX.qG')
    .option('--groups <n>', 'number of quantile groups', '5')
    .option('--weight <w>', 'equal | value (market value at the sort date; needs shares outstanding)', 'equal')
    .option('--frequency <f>', `return frequency: ${FREQUENCIES.join(' | ')}`, 'monthly')
    .option('--rebalance <f>', 'sort again at the end of each such period (default: every period)')
    .option('--lookback <n>', 'momentum and yield look-back in periods (default: one year)')
    .option('--skip <n>', 'momentum: latest periods skipped (default 1, as in 12-1)')
    .option('--min-assets <n>', 'a bucket with fewer assets has no return for that holding span', '1')
    .option('--assets <names>', 'comma-separated assets to sort (default: every stored asset)')
    .option('--start <date>', 'first period considered (YYYY-MM-DD)')
    .option('--end <date>', 'last period considered (YYYY-MM-DD)')
    .option('--replace', 'replace stored portfolios of the same names')
    .option('--json', 'print {series: [{name, periods, net}], rules, formations} as JSON')
    .action((o: BuildFlags) => {
      const spec = parseSortSpec({
        characteristic: o.sort,
        groups: positiveInt('--groups', o.groups),
        weight: o.weight,
        frequency: o.frequency,
        ...(o.rebalance ? { rebalance: o.rebalance } : {}),
        name: o.name,
        ...(o.lookback !== undefined ? { lookback: positiveInt('--lookback', o.lookback) } : {}),
        ...(o.skip !== undefined ? { skip: Number(o.skip) } : {}),
        minAssets: positiveInt('--min-assets', o.minAssets),
        ...(o.assets ? { assets: o.assets.split(',').map((s) => s.trim()).filter(Boolean) } : {}),
        ...(o.start ? { start: o.start } : {}),
        ...(o.end ? { end: o.end } : {}),
      });
      const store = new Store(o.db, { mustExist: true });
      try {
        const res = sortPortfolios(store.loadAssets(), spec);
        const existing = new Set(store.portfolioNames());
        const clash = res.series.map((s) => s.name).filter((n) => existing.has(n));
        if (clash.length && !o.replace) throw new DeflatorError('CONFLICT', `portfolio(s) ${clash.join(', ')} already exist in ${o.db}`, 'choose another --name, or pass --replace');
        store.db.transaction(() => {
          for (const s of res.series) store.savePortfolio(s, { replace: o.replace === true });
        })();
        if (o.json) {
          const series = res.series.map((s) => ({ name: s.name, frequency: s.frequency, periods: s.periods, net: Array.from(s.net, (v) => (Number.isNaN(v) ? null : v)) }));
          out(`${JSON.stringify({ series, rules: res.rules, formations: res.formations, caution: CAUTION }, null, 2)}\n`);
        } else out(summary(res));
      } finally {
        store.close();
      }
    });
  cmd
    .command('list')
    .description('list the stored portfolios with their periods and rules')
    .requiredOption('--db <path>', 'project database')
    .option('--json', 'print [{name, frequency, first, last, periods, missing, rules}] as JSON')
    .action((o: { db: string; json?: boolean }) => {
      const store = new Store(o.db, { mustExist: true, access: 'read' });
      try {
        const list = store.loadPortfolios().map((p) => ({
          name: p.name,
          frequency: p.frequency,
          first: p.periods[0] ?? null,
          last: p.periods[p.periods.length - 1] ?? null,
          periods: p.periods.length,
          missing: Array.from(p.net).filter(Number.isNaN).length,
          rules: p.rules ?? null,
        }));
        if (o.json) {
          out(`${JSON.stringify(list, null, 2)}\n`);
          return;
        }
        if (!list.length) {
          out(`No portfolios in ${o.db}; build some with deflator portfolio build.\n`);
          return;
        }
        out(`${alignTable(['portfolio', 'frequency', 'first', 'last', 'periods', 'missing'], list.map((p) => [p.name, p.frequency, p.first ?? '', p.last ?? '', String(p.periods), String(p.missing)]))}\n`);
        const rules = [...new Set(list.map((p) => (p.rules ?? '').replace(/ This is bucket \d+ of \d+ \([a-z]+ characteristic\)\.$/, '')).filter(Boolean))];
        for (const r of rules) out(`\nRules: ${r}\n`);
      } finally {
        store.close();
      }
    });
}
