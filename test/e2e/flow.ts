/**
 * The end-to-end flow, written once for the browser (loopback server) and the Electron
 * app: load the demo, fit a model, check the pricing-error bars against the engine's
 * result, run a short back-test to 100%, compare models; a screenshot of each screen.
 */
import { expect } from '@playwright/test';
import type { Page } from '@playwright/test';
import { mkdirSync } from 'node:fs';
import path from 'node:path';
import type { BacktestResult, CompareResult, FitResult } from '../../shared/results.js';
import { present, type Presentation } from '../../shared/present/index.js';
import { tableCellText } from '../../shared/present/format.js';
import { PALETTE } from '../../shared/charts/palette.js';

const root = path.resolve(import.meta.dirname, '../..');
export const SCREENSHOTS = path.join(root, 'test-output', 'screenshots');
mkdirSync(SCREENSHOTS, { recursive: true });

/** One bridge call through the loopback server, with the page's access key; fails the test with the error's code and message. */
export async function bridgeCall<T>(page: Page, name: string, req: unknown): Promise<T> {
  const env = (await page.evaluate(
    async ([n, r]) => {
      const key = sessionStorage.getItem('deflator.key') ?? '';
      const res = await fetch(`./api/${n}`, { method: 'POST', headers: { 'content-type': 'application/json', authorization: `Bearer ${key}` }, body: JSON.stringify(r) });
      return res.json();
    },
    [name, req] as const,
  )) as { ok: boolean; value: T; error?: unknown };
  expect(env.ok, JSON.stringify(env.error)).toBe(true);
  return env.value;
}

export async function shot(page: Page, name: string): Promise<void> {
  // From the top: the navigation and the page title are sticky, and a full-page capture
  // taken while scrolled would draw them halfway down the image.
  await page.evaluate(() => window.scrollTo(0, 0));
  await page.screenshot({ path: path.join(SCREENSHOTS, `${name}.png`), fullPage: true });
}

/** One bar of the SVG: its left edge, and its top and bottom in pixels. */
export interface Bar {
  x: number;
  top: number;
  bottom: number;
  fill: string;
}

/** Parses the bars of a chart's SVG (paths filled with the positive or negative colour). */
export async function barsOf(page: Page, selector: string): Promise<Bar[]> {
  const paths = await page.$$eval(`${selector} svg path`, (els) => els.map((e) => ({ d: e.getAttribute('d') ?? '', fill: (e.getAttribute('fill') ?? '').toLowerCase() })));
  const colors = new Set([PALETTE.primary.toLowerCase(), PALETTE.negative.toLowerCase()]);
  const bars: Bar[] = [];
  for (const p of paths) {
    if (!colors.has(p.fill)) continue;
    // zrender writes rectangles as M x y l dx dy ... Z (relative) or with absolute L
    const tokens = p.d.match(/[MLmlZz]|-?\d*\.?\d+(?:e-?\d+)?/g) ?? [];
    let cmd = '';
    let x = 0;
    let y = 0;
    const pts: [number, number][] = [];
    for (let i = 0; i < tokens.length; ) {
      const t = tokens[i];
      if (/[MLmlZz]/.test(t)) {
        cmd = t;
        i += 1;
        continue;
      }
      const a = Number(tokens[i]);
      const b = Number(tokens[i + 1]);
      i += 2;
      if (cmd === 'M' || cmd === 'L') {
        x = a;
        y = b;
      } else {
        x += a;
        y += b;
      }
      pts.push([x, y]);
    }
    if (pts.length < 3) continue;
    const ys = pts.map((q) => q[1]);
    bars.push({ x: Math.min(...pts.map((q) => q[0])), top: Math.min(...ys), bottom: Math.max(...ys), fill: p.fill });
  }
  return bars.sort((a, b) => a.x - b.x);
}

/**
 * Bars against values: one bar per value, left to right in the values' order, all on one
 * baseline, positive bars above it and negative below, heights proportional to |value|
 * (one pixel scale for all, fitted by least squares; each bar within 1 px of it).
 */
export function checkBars(bars: Bar[], values: number[]): { scale: number; worstPx: number } {
  expect(bars.length, 'one bar per test asset').toBe(values.length);
  const baseline = (i: number) => (values[i] >= 0 ? bars[i].bottom : bars[i].top);
  const y0 = baseline(values.findIndex((v) => Math.abs(v) > 0));
  let num = 0;
  let den = 0;
  values.forEach((v, i) => {
    const h = bars[i].bottom - bars[i].top;
    num += h * Math.abs(v);
    den += v * v;
    expect(Math.abs(baseline(i) - y0), `bar ${i} sits on the zero line`).toBeLessThan(1);
    expect(bars[i].fill, `bar ${i} colour follows its sign`).toBe((v >= 0 ? PALETTE.primary : PALETTE.negative).toLowerCase());
  });
  const scale = num / den;
  let worstPx = 0;
  values.forEach((v, i) => {
    const h = bars[i].bottom - bars[i].top;
    worstPx = Math.max(worstPx, Math.abs(h - scale * Math.abs(v)));
  });
  expect(worstPx, `bar heights proportional to the pricing errors (scale ${scale.toFixed(3)} px per %)`).toBeLessThan(1);
  return { scale, worstPx };
}

/** The set-up chooses no factor for the user: pick the first one (where none is chosen yet), so the spec is valid. */
export async function chooseFirstFactor(page: Page): Promise<void> {
  // the factor names arrive with the project's coverage: wait for them before asking whether one is chosen
  const first = page.locator('[data-testid=factor-list] label').first();
  await expect(first).toBeVisible();
  if (await page.locator('[data-testid=factor-prompt]').isVisible()) await first.click();
  await expect(page.locator('.ok-line')).toBeVisible();
}

/**
 * The screen's tables against the presentation model of the result it shows
 * (shared/present): each table's headings (units included), and each cell's text and full
 * value (data-value), in the table's own row order.
 */
export async function checkScreenTables(page: Page, p: Presentation, ids: string[]): Promise<number> {
  let cells = 0;
  for (const id of ids) {
    const t = p.tables.find((x) => x.id === id);
    expect(t, `presentation table ${id}`).toBeDefined();
    const box = page.locator(`.datatable[data-table="${id}"]`).first();
    // a table folded under its chart (closed so the chart draws first) is opened to be read
    const fold = page.locator('details.under-chart', { has: box });
    if ((await fold.count()) && !(await fold.first().evaluate((d) => (d as HTMLDetailsElement).open))) await fold.first().locator('summary').click();
    await expect(box, `table ${id} on screen`).toBeVisible();
    const got = await box.evaluate((el) => ({
      head: Array.from(el.querySelectorAll('thead th')).map((th) => (th.textContent ?? '').trim()),
      rows: Array.from(el.querySelectorAll('tbody tr')).map((tr) => Array.from(tr.querySelectorAll('td')).map((td) => ({ text: (td.textContent ?? '').replace(/\s+/g, ' ').trim(), value: td.getAttribute('data-value') }))),
    }));
    expect(got.head, `${id}: headings`).toEqual(t!.columns.map((c) => c.header));
    expect(got.rows.length, `${id}: rows`).toBe(t!.rows.length);
    t!.rows.forEach((row, i) =>
      row.forEach((v, j) => {
        const cell = got.rows[i][j];
        const mark = (t!.marks[t!.columns[j].key] ?? []).includes(i) ? '*' : '';
        const shown = tableCellText(t!, i, j, '—') + mark;
        expect(cell.text.replace(/ !$/, ''), `${id} row ${i + 1} "${t!.columns[j].header}"`).toBe(shown);
        if (typeof v === 'number') expect(Object.is(Number(cell.value), v), `${id} row ${i + 1} "${t!.columns[j].header}": ${cell.value} vs ${v}`).toBe(true);
        cells++;
      }),
    );
  }
  return cells;
}

/** The fit request as the set-up shows it (the spec JSON without its back-test key). */
export async function specOnScreen(page: Page): Promise<Record<string, unknown>> {
  const text = await page.locator('[data-testid=spec-json]').textContent({ timeout: 10_000 });
  const spec = JSON.parse(text ?? '{}') as Record<string, unknown>;
  delete spec.backtest;
  return spec;
}

/** Sends a fit through the page's own transport (IPC in Electron, HTTP in a browser). */
export async function fitThroughPage(page: Page, spec: Record<string, unknown>): Promise<FitResult> {
  const env = (await page.evaluate(async (s) => {
    const w = window as unknown as { deflator?: { invoke(n: string, r: unknown): Promise<unknown> } };
    if (w.deflator) return w.deflator.invoke('fit', { spec: s });
    // the page's access key (the loopback server refuses calls without it)
    const key = sessionStorage.getItem('deflator.key') ?? '';
    const r = await fetch('./api/fit', { method: 'POST', headers: { 'content-type': 'application/json', authorization: `Bearer ${key}` }, body: JSON.stringify({ spec: s }) });
    return r.json();
  }, spec)) as { ok: boolean; value: FitResult };
  expect(env.ok).toBe(true);
  return env.value;
}

export async function drawnCount(page: Page, selector: string): Promise<number> {
  return Number((await page.locator(`${selector}`).first().getAttribute('data-drawn')) ?? '0');
}

export async function runDemoFlow(page: Page, prefix: string): Promise<void> {
  // Histories: the demo's coverage and one asset's price against its total-return index
  await expect(page.locator('.nav-foot .db')).toHaveText(/\.db$/);
  const rows = page.locator('.datatable tbody tr');
  await expect(rows.first()).toBeVisible();
  expect(await rows.count()).toBeGreaterThanOrEqual(30);
  await expect(page.locator('[data-chart-id^="history-"]')).toHaveAttribute('data-drawn', /[1-9]/);
  await shot(page, `${prefix}histories`);

  // Model set-up
  await page.click('[data-screen=setup]');
  // No factor is chosen for the user: the set-up asks, and one click picks the first.
  await expect(page.locator('[data-testid=factor-prompt]')).toBeVisible();
  await expect(page.locator('.field-error', { hasText: 'needs at least one factor' }), 'the missing factors said once').toHaveCount(1);
  await chooseFirstFactor(page);
  await expect(page.locator('[data-testid=lags-preview]')).toContainText(/auto gives \d+ lags? on T = \d+ periods/);
  await shot(page, `${prefix}model-setup`);
  const spec = await specOnScreen(page);

  // Fit: bars against the engine's own result
  await page.click('[data-testid=run-fit]');
  const chart = '[data-testid=pricing-error-chart]';
  await expect(page.locator(chart)).toHaveAttribute('data-drawn', /[1-9]/, { timeout: 60_000 });
  const result = await fitThroughPage(page, spec);
  const bars = await barsOf(page, chart);
  checkBars(bars, result.pricingErrors.map((r) => r.alphaAnnual * 100));
  // every table of the fit screen: the presentation model's headings, texts and values
  const fitCells = await checkScreenTables(page, present(result), ['tests', 'fit', 'parameters', 'discount-factor', 'pricing-errors']);
  expect(fitCells).toBeGreaterThan(200);
  // the demo fit's discount factor is below the volatility bound: the warning is listed and flags its table
  await expect(page.locator('[data-testid=result-warnings] [data-warning=BELOW_VOLATILITY_BOUND]')).toBeVisible();
  await expect(page.locator('.datatable[data-table=discount-factor] [data-warning=BELOW_VOLATILITY_BOUND]')).toBeVisible();
  await expect(page.locator('[data-caution]')).toContainText('not investment advice');
  await expect(page.locator('body')).not.toContainText('NaN');
  await shot(page, `${prefix}fit-results`);

  // Sorting by alpha redraws the bars in ascending order of alpha
  const before = await drawnCount(page, chart);
  await page.click('[data-sort=alpha]');
  await expect.poll(() => drawnCount(page, chart)).toBeGreaterThan(before);
  const sorted = [...result.pricingErrors].map((r) => r.alphaAnnual * 100).sort((a, b) => a - b);
  checkBars(await barsOf(page, chart), sorted);

  // Back-test: short (step 12), progress to 100 %
  await page.click('[data-screen=setup]');
  await page.locator('label:has-text("step") input').fill('12');
  // through the loopback server the screen's own reply is read back (the Electron run has no HTTP to watch)
  const overHttp = page.url().startsWith('http');
  const btReplied = overHttp ? page.waitForResponse((r) => r.url().endsWith('/api/backtest')) : undefined;
  await page.click('[data-testid=run-backtest]');
  const progress = page.locator('[data-testid=backtest-progress]');
  await expect(progress).toHaveAttribute('data-percent', '100', { timeout: 60_000 });
  await expect(page.locator('[data-chart-id=parameter-paths]')).toHaveAttribute('data-drawn', /[1-9]/);
  await expect(page.locator('[data-chart-id=oos-errors]')).toHaveAttribute('data-drawn', /[1-9]/);
  if (btReplied) {
    const bt = (await (await btReplied).json()) as { ok: boolean; value: BacktestResult };
    expect(bt.ok).toBe(true);
    await checkScreenTables(page, present(bt.value), ['summary', 'per-asset', 'path-summary']);
    await expect(page.locator('body')).toContainText("in sample (mean of the windows' own α)");
  }
  await shot(page, `${prefix}back-test`);

  // Comparison of two models, best in each column marked
  await page.click('[data-screen=setup]');
  await page.click('[data-testid=add-compare]');
  await page.locator('[data-testid=factor-list] label').nth(1).click();
  await page.click('[data-testid=add-compare]');
  const cmpReplied = overHttp ? page.waitForResponse((r) => r.url().endsWith('/api/compare')) : undefined;
  await page.click('[data-testid=run-compare]');
  await expect(page.locator('[data-testid=compare-fit] tbody tr')).toHaveCount(2, { timeout: 60_000 });
  if (cmpReplied) {
    const cmp = (await (await cmpReplied).json()) as { ok: boolean; value: CompareResult };
    expect(cmp.ok).toBe(true);
    await checkScreenTables(page, present(cmp.value), ['models', 'fit', 'out-of-sample']);
  }
  expect(await page.locator('[data-testid=compare-fit] td.best').count()).toBeGreaterThanOrEqual(4);
  await expect(page.locator('[data-testid=compare-models] td[data-key=stat].best')).toHaveCount(0); // test statistics are never ranked
  await expect(page.locator('body')).not.toContainText('NaN');
  await shot(page, `${prefix}comparison`);
}
