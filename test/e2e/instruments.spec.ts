/**
 * Instruments in the app (docs/methods.md, Instruments): the set-up picks them and their
 * scaling, the fit's reply carries pricing errors per asset and instrument, and the grid on
 * the fit screen shows every one of them: one cell per (asset, instrument), labelled with
 * the reply's own t and coloured as shared/charts/pricing-error-heatmap.ts says.
 */
import { expect, test } from './fixtures.js';
import type { FitResult } from '../../shared/results.js';
import { heatColor } from '../../shared/charts/pricing-error-heatmap.js';
import { num } from '../../shared/charts/common.js';
import { shot } from './flow.js';

test('instruments: set-up, fit reply per asset and instrument, the grid of t values', async ({ page }) => {
  const errors: string[] = [];
  page.on('pageerror', (e) => errors.push(e.message));
  await page.goto('/');
  await page.click('[data-screen=setup]');
  // eight test assets, the board factor, both instruments
  const boxes = page.locator('[data-testid=asset-list] input[type=checkbox]');
  const n = await boxes.count();
  for (let i = 0; i < n; i++) if (await boxes.nth(i).isChecked()) await boxes.nth(i).uncheck();
  for (let i = 0; i < 8; i++) await boxes.nth(i).check();
  await page.locator('[data-testid=factor-list] label', { hasText: 'harbor' }).click();
  await page.check('[data-testid=instruments-on]');
  await page.locator('[data-testid=instrument-list] label', { hasText: 'board_yield' }).click();
  await page.locator('[data-testid=instrument-list] label', { hasText: 'term_spread' }).click();
  await expect(page.locator('[data-testid=instrument-count]')).toContainText('8 test assets × 3 instruments = 24 pricing moments');
  await expect(page.locator('[data-testid=spec-json]')).toContainText('"instruments"');
  await expect(page.locator('.ok-line')).toBeVisible();
  await shot(page, 'setup-instruments');

  const replied = page.waitForResponse((r) => r.url().endsWith('/api/fit'));
  await page.click('[data-testid=run-fit]');
  const body = (await (await replied).json()) as { ok: boolean; value: FitResult };
  expect(body.ok).toBe(true);
  const fit = body.value;
  expect(fit.sample.instruments).toEqual(['const', 'board_yield', 'term_spread']);
  expect(fit.pricingErrors).toHaveLength(24);
  expect(fit.pricingErrors.map((r) => r.instrument)).toEqual([...Array(8).fill('const'), ...Array(8).fill('board_yield'), ...Array(8).fill('term_spread')]);

  const grid = page.locator('[data-testid=pricing-error-grid]');
  await expect(grid).toHaveAttribute('data-drawn', /[1-9]/);
  const labels = await grid.locator('svg text').allTextContents();
  const expected = fit.pricingErrors.map((r) => num(r.t, 1));
  // every cell's label is there (axis labels come on top of them)
  const counts = new Map<string, number>();
  for (const l of labels) counts.set(l.trim(), (counts.get(l.trim()) ?? 0) + 1);
  for (const e of expected) {
    expect(counts.get(e) ?? 0, `a cell labelled ${e}`).toBeGreaterThan(0);
    counts.set(e, (counts.get(e) ?? 0) - 1);
  }
  const fills = new Set((await grid.locator('svg path').evaluateAll((els) => els.map((e) => (e.getAttribute('fill') ?? '').toLowerCase()))));
  for (const r of fit.pricingErrors) expect(fills.has(heatColor(r.t)), `a cell coloured ${heatColor(r.t)} for t = ${r.t}`).toBe(true);
  await shot(page, 'fit-instruments');
  expect(errors).toEqual([]);
});
