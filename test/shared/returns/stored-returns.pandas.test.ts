/**
 * Assets imported as returns (METHODS section 8) against pandas: the seeded file
 * fixtures/return_files.csv (YYYYMM dates, percent, -99.99 for a missing return) goes
 * through the import pipeline and the returns engine; fixtures/return_files.json holds what
 * pandas computes from the same file (make_return_files.py: read_csv with na_values,
 * Period parsing, Series.prod per Q-DEC / A-DEC period). Also the period keys (YYYYMM,
 * YYYY-MM, YYYYQn, YYYY-Qn, YYYY) against pandas Period.end_time, and missing codes as gaps.
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { isReturnHistory } from '../../../shared/data.js';
import { returnsTable } from '../../../shared/returns/index.js';
import { importReturns } from '../../../src-main/import/index.js';
import { DateParser, dateFormat } from '../../../src-main/import/fields.js';
import { Store } from '../../../src-main/store/store.js';
import { FIXTURES, readJson } from './helpers.js';

interface PeriodRow {
  label: string;
  gross: number | null;
  cutShort: boolean;
}
interface Fixture {
  versions: Record<string, string>;
  periodKeys: { text: string; format: string; date: string }[];
  monthly: Record<string, { label: string; net: number | null }[]>;
  quarterly: Record<string, PeriodRow[]>;
  annual: Record<string, PeriodRow[]>;
}

const ref = readJson<Fixture>('return_files.json');
const dir = mkdtempSync(path.join(tmpdir(), 'deflator-retfiles-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

async function imported(): Promise<Store> {
  const store = new Store(path.join(dir, `r${Math.random().toString(36).slice(2)}.db`));
  await importReturns(store, path.join(FIXTURES, 'return_files.csv'), { dateFormat: 'YYYYMM', units: 'percent', missing: ['-99.99'] });
  return store;
}

/** |a - b| <= tol * max(1, |b|), with the numbers printed on failure. */
function close(a: number, b: number, tol: number, what: string): void {
  expect(Math.abs(a - b) <= tol * Math.max(1, Math.abs(b)), `${what}: ${a} vs pandas ${b} (tolerance ${tol})`).toBe(true);
}

describe(`return files against pandas ${ref.versions.pandas}`, () => {
  it('period keys read as the period\'s last calendar day (pandas Period.end_time)', () => {
    for (const k of ref.periodKeys) {
      const p = new DateParser(dateFormat(k.format));
      const b = Buffer.from(k.text);
      const day = p.parse(b, 0, b.length);
      expect(typeof day, `${k.text} as ${k.format}`).toBe('number');
      expect(p.text(day as number), `${k.text} as ${k.format}`).toBe(k.date);
    }
  });

  it('monthly returns as stored: percent / 100, missing codes are gaps (null), never zeros', async () => {
    const store = await imported();
    const assets = store.loadAssets();
    expect(assets.every(isReturnHistory)).toBe(true);
    const t = returnsTable(assets, { frequency: 'monthly', kind: 'net' });
    for (const [name, rows] of Object.entries(ref.monthly)) {
      const byLabel = new Map(t.periods.map((p, i) => [p, t.series[name][i]]));
      let gaps = 0;
      for (const r of rows) {
        const v = byLabel.get(r.label);
        if (r.net === null) {
          gaps++;
          expect(v, `${name} ${r.label} is a gap`).toBeNull();
        } else close(v as number, r.net, 1e-15, `${name} ${r.label}`);
      }
      // leading -99.99 cells are no data (not stored), only the ones inside are gaps
      expect(t.periods.filter((p, i) => t.series[name][i] !== null).length).toBe(rows.length - gaps);
    }
    expect(ref.monthly['quay-gaps'].filter((r) => r.net === null).map((r) => r.label)).toEqual(['2002-06-30', '2002-07-31']);
    expect(ref.monthly['quay-leading'][0].label).toBe('2001-06-30');
    store.close();
  });

  for (const f of ['quarterly', 'annual'] as const) {
    it(`${f}: compounded gross returns, labels, incomplete first periods, gaps and the cut-short last period`, async () => {
      const store = await imported();
      const t = returnsTable(store.loadAssets(), { frequency: f, kind: 'gross' });
      let compared = 0;
      for (const [name, rows] of Object.entries(ref[f])) {
        for (const r of rows) {
          const i = t.periods.indexOf(r.label);
          expect(i, `${name}: period ${r.label} in the table`).toBeGreaterThanOrEqual(0);
          const v = t.series[name][i];
          if (r.gross === null) expect(v, `${name} ${r.label}: no ${f} return`).toBeNull();
          else {
            close(v as number, r.gross, 1e-14, `${name} ${r.label}`);
            compared++;
          }
          const flagged = t.sample.flags.some((x) => x.asset === name && x.period === r.label && /cut short/.test(x.note));
          expect(flagged, `${name} ${r.label}: cut short ${r.cutShort}`).toBe(r.cutShort);
        }
        // no period beyond pandas' list has a value
        const labels = new Set(rows.map((r) => r.label));
        t.periods.forEach((p, i) => {
          if (!labels.has(p)) expect(t.series[name][i], `${name} ${p}`).toBeNull();
        });
      }
      expect(compared).toBeGreaterThan(f === 'quarterly' ? 50 : 10);
      store.close();
    });
  }

  it('the index V starts at 1 at the period before the first return and carries its level over a gap (flagged)', async () => {
    const store = await imported();
    const t = returnsTable(store.loadAssets(['quay-full', 'quay-gaps']), { frequency: 'monthly', kind: 'index' });
    expect(t.periods[0]).toBe('2000-12-31');
    expect(t.series['quay-full'][0]).toBe(1);
    // V over the gap: the value after it is V before it times the return after it
    const at = (label: string) => t.series['quay-gaps'][t.periods.indexOf(label)] as number;
    expect(t.series['quay-gaps'][t.periods.indexOf('2002-06-30')]).toBeNull();
    const aug = ref.monthly['quay-gaps'].find((r) => r.label === '2002-08-31')?.net as number;
    close(at('2002-08-31'), at('2002-05-31') * (1 + aug), 1e-15, 'V after the gap');
    expect(t.sample.flags.filter((x) => x.asset === 'quay-gaps' && /missing value/.test(x.note)).map((x) => x.period)).toEqual(['2002-06-30', '2002-07-31']);
    store.close();
  });
});
