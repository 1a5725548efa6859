import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Browser, Page } from 'playwright-core';
import { CAUTION, type AnyResult } from '../../../shared/results.js';
import { resultToHtml } from '../../../shared/report/html.js';
import { niceTicks } from '../../../shared/report/svg.js';
import { HAVE_CHROMIUM, launch } from './browser.js';
import { ASSETS, sampleBacktest, sampleCompare, sampleFit, sampleRecord } from './sample-results.js';

/** The little of the DOM the in-page checks use (the project's typings have no DOM lib). */
interface El {
  getAttribute(name: string): string | null;
  textContent: string | null;
  namespaceURI: string | null;
  querySelector(sel: string): El | null;
  querySelectorAll(sel: string): ArrayLike<El>;
  getBoundingClientRect(): { width: number };
}
declare const document: El & { title: string };

describe('HTML report: self-contained', () => {
  it.each([['fit', sampleFit()], ['backtest', sampleBacktest()], ['compare', sampleCompare()]] as [string, AnyResult][])('%s has no scripts or external references', (_k, r) => {
    const html = resultToHtml(r, sampleRecord());
    expect(html).not.toMatch(/<script/i);
    expect(html).not.toMatch(/<link\b/i);
    expect(html).not.toMatch(/\b(src|href)\s*=/i);
    expect(html).not.toMatch(/url\(/i);
    expect(html).not.toMatch(/@import/i);
    expect(html).toContain(CAUTION);
    expect(html).not.toMatch(/NaN|Infinity|undefined/);
  });

  it('nice ticks cover the range with round steps (Heckbert 1990)', () => {
    for (const [lo, hi] of [[-0.37, 2.1], [0, 1], [-5e-4, -1e-4], [3, 3], [-1234, 98765]]) {
      const t = niceTicks(lo, hi);
      expect(t[0]).toBeLessThanOrEqual(lo);
      expect(t[t.length - 1]).toBeGreaterThanOrEqual(hi);
      const step = t[1] - t[0];
      const m = step / 10 ** Math.floor(Math.log10(step));
      expect([1, 2, 5, 10].some((x) => Math.abs(m - x) < 1e-9)).toBe(true);
      expect(t.length).toBeLessThanOrEqual(12);
    }
  });
});

// Reader: headless Debian Chromium (playwright-core) parses the report as a browser does.
describe.runIf(HAVE_CHROMIUM)('HTML report opened in headless Chromium', () => {
  let browser: Browser;
  let page: Page;
  const requests: string[] = [];
  beforeAll(async () => {
    browser = await launch();
    page = await browser.newPage();
    page.on('request', (q) => {
      if (!q.url().startsWith('about:')) requests.push(q.url());
    });
  });
  afterAll(async () => {
    await browser?.close();
  });

  it('fit: tables hold the exact stored numbers; bars, whiskers and scatter points match the result', async () => {
    const r = sampleFit();
    await page.setContent(resultToHtml(r, sampleRecord()), { waitUntil: 'load' });
    const got = await page.evaluate(() => {
      const table = (id: string) =>
        Array.from(document.querySelectorAll(`#table-${id} tbody tr`)).map((tr) =>
          Array.from(tr.querySelectorAll('td')).map((td) => td.getAttribute('data-value') ?? td.textContent ?? ''),
        );
      const bars = Array.from(document.querySelectorAll('#chart-pricing-errors rect.bar')).map((b) => [b.getAttribute('data-label'), b.getAttribute('data-value')]);
      const whiskers = document.querySelectorAll('#chart-pricing-errors g.whisker').length;
      const points = Array.from(document.querySelectorAll('#chart-predicted-realised circle.point')).map((c) => [c.getAttribute('data-label'), c.getAttribute('data-x'), c.getAttribute('data-y')]);
      const svgs = Array.from(document.querySelectorAll('svg')).map((s) => ({ ns: s.namespaceURI, w: s.getBoundingClientRect().width }));
      return {
        params: table('parameters'),
        alphas: table('pricing-errors'),
        tests: table('tests'),
        bars,
        whiskers,
        points,
        svgs,
        caution: document.querySelector('#caution')?.textContent,
        header: Array.from(document.querySelectorAll('table.header tr')).map((tr) => tr.textContent),
        record: document.querySelector('table.record')?.textContent ?? '',
        title: document.title,
        hover: /hover/i.test(document.querySelector('body')?.textContent ?? ''),
      };
    });
    expect(got.params.length).toBe(r.params.length);
    r.params.forEach((p, i) => {
      expect(got.params[i][0]).toBe(p.name);
      expect(Object.is(Number(got.params[i][1]), p.estimate), `param ${p.name}: ${got.params[i][1]} vs ${p.estimate}, bit for bit`).toBe(true);
      expect(Object.is(Number(got.params[i][2]), p.se)).toBe(true);
    });
    r.pricingErrors.forEach((e, i) => {
      expect(got.alphas[i][0]).toBe(e.asset);
      // Percent columns hold 100 x the stored decimal, as every surface shows them.
      expect(Object.is(Number(got.alphas[i][1]), 100 * e.alpha), `alpha ${e.asset}`).toBe(true);
      expect(Object.is(Number(got.alphas[i][7]), 100 * e.predicted)).toBe(true);
    });
    expect(got.tests.map((t) => t[0])).toEqual(['pricing errors chi-square', 'Hansen J', 'GRS']);
    expect(got.bars.map((b) => b[0])).toEqual(ASSETS);
    got.bars.forEach((b, i) => expect(Number(b[1])).toBe(100 * r.pricingErrors[i].alphaAnnual));
    expect(got.whiskers).toBe(ASSETS.length);
    expect(got.points.length).toBe(ASSETS.length);
    got.points.forEach((p, i) => {
      expect(Number(p[1])).toBe(100 * (r.pricingErrors[i].predicted * 12));
      expect(Number(p[2])).toBe(100 * (r.pricingErrors[i].meanReturn * 12));
    });
    expect(got.svgs.length).toBe(2);
    expect(got.hover).toBe(false);
    for (const s of got.svgs) {
      expect(s.ns).toBe('http://www.w3.org/2000/svg');
      expect(s.w).toBeGreaterThan(100);
    }
    expect(got.caution).toBe(CAUTION);
    expect(got.header.some((h) => h?.startsWith('sample2031-01-31 to 2035-12-31, monthly'))).toBe(true);
    expect(got.record).toContain('ab'.repeat(32));
    expect(got.record).toContain('cd'.repeat(32));
    expect(got.title).toContain('run 42');
  });

  it('back-test and comparison render their tables and charts', async () => {
    const b = sampleBacktest();
    await page.setContent(resultToHtml(b, sampleRecord()), { waitUntil: 'load' });
    const bt = await page.evaluate(() => ({
      tables: Array.from(document.querySelectorAll('table.result')).map((t) => [t.getAttribute('data-table'), t.querySelectorAll('tbody tr').length]),
      lines: Array.from(document.querySelectorAll('#chart-paths path.line')).map((p) => [p.getAttribute('data-series'), p.getAttribute('data-values')]),
      bars: document.querySelectorAll('#chart-oos-errors rect.bar').length,
    }));
    expect(bt.tables).toEqual([
      ['summary', 6],
      ['per-asset', ASSETS.length],
      ['path-summary', 2],
      ['paths', b.paths.length * 2],
      ['windows', b.windowList.length],
    ]);
    expect(bt.lines.map((l) => l[0])).toEqual(['b.MKT', 'b.SIZE']);
    expect(bt.lines[0][1]!.split(' ').map(Number)).toEqual(b.paths.map((w) => w.params[0].estimate));
    expect(bt.bars).toBe(ASSETS.length);

    const c = sampleCompare();
    await page.setContent(resultToHtml(c, sampleRecord()), { waitUntil: 'load' });
    const cm = await page.evaluate(() => ({
      tables: Array.from(document.querySelectorAll('table.result')).map((t) => t.getAttribute('data-table')),
      rmseBars: Array.from(document.querySelectorAll('#chart-rmse rect.bar')).map((x) => x.getAttribute('data-label')),
    }));
    expect(cm.tables).toEqual(['models', 'fit', 'out-of-sample', 'parameters', 'hj-tests']);
    expect(cm.rmseBars).toEqual(['linear(MKT)', 'linear(MKT,SIZE)', 'consumption(CONS)']);
    expect(requests).toEqual([]);
  });
});

if (!HAVE_CHROMIUM) console.log('HTML-in-browser checks skipped: no chromium on PATH (Debian: apt-get install chromium; or set DEFLATOR_CHROMIUM)');
