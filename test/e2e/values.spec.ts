/**
 * Present values through the app on the demo database: the decomposition of the demo
 * aggregate (tables read against the engine's own reply, dp and the regressions drawn),
 * the drift split drawn as stacked bars, and a fit's discounted-value chart.
 */
import type { DriftResult, PresentValueResult } from '../../shared/results.js';
import { expect, test } from './fixtures.js';
import { bridgeCall, chooseFirstFactor, shot } from './flow.js';


test('the present-value screen: decomposition of the demo aggregate and the drift split', async ({ page }) => {
  await page.goto('/');
  await page.click('[data-screen=values]');
  await page.click('[data-testid=pv-run]');
  const result = page.locator('[data-testid=pv-result]');
  await expect(result).toBeVisible({ timeout: 60_000 });
  await expect(page.locator('[data-testid=dp-chart]')).toHaveAttribute('data-drawn', /[1-9]/);
  await expect(page.locator('[data-testid=dp-regressions-chart]')).toHaveAttribute('data-drawn', /[1-9]/);
  // the numbers on screen are the engine's (6 significant digits)
  const pv = await bridgeCall<PresentValueResult>(page, 'presentValue', { spec: { analysis: 'present-value', aggregate: true } });
  await expect(result).toContainText(Number(pv.regressions.r.b.toPrecision(6)).toString());
  await expect(result).toContainText(Number(pv.longRun.dd.b.toPrecision(6)).toString());
  await expect(result).toContainText('2001 to 2024, T = 24');
  await shot(page, 'present-value');

  await page.click('[data-testid=drift-run]');
  const drift = page.locator('[data-testid=drift-chart]');
  await expect(drift).toHaveAttribute('data-drawn', /[1-9]/, { timeout: 60_000 });
  const dr = await bridgeCall<DriftResult>(page, 'drift', { spec: { analysis: 'drift' } });
  expect(dr.assets.length).toBeGreaterThanOrEqual(30); // the demo's 30, and any other spec's imports into the shared server database
  await page.locator('[data-testid=drift-chart]').scrollIntoViewIfNeeded();
  await shot(page, 'drift-split');
});

test('the fit screen charts the discounted-value paths', async ({ page }) => {
  await page.goto('/');
  await page.click('[data-screen=setup]');
  await chooseFirstFactor(page);
  await page.click('[data-testid=run-fit]');
  const chart = page.locator('[data-testid=discounted-chart]');
  await expect(chart).toHaveAttribute('data-drawn', /[1-9]/, { timeout: 60_000 });
  await page.locator('[data-testid=discounted-chart]').scrollIntoViewIfNeeded();
  await shot(page, 'fit-discounted');
});
