/** The app in Debian's Chromium against `deflator serve` on the demo database. */
import { expect, test } from './fixtures.js';
import { mkdirSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import type { FitResult } from '../../shared/results.js';
import { barsOf, checkBars, chooseFirstFactor, runDemoFlow, shot, specOnScreen } from './flow.js';
import { serverAddress } from './fixtures.js';

const root = path.resolve(import.meta.dirname, '../..');

test('demo: histories, fit, pricing-error bars equal to the engine result, back-test to 100 %, comparison', async ({ page }) => {
  const errors: string[] = [];
  page.on('pageerror', (e) => errors.push(e.message));
  page.on('console', (m) => {
    if (m.type() === 'error') errors.push(m.text());
  });
  await page.goto('/');
  await runDemoFlow(page, '');
  expect(errors).toEqual([]);
});

test('the bars show the very reply the screen received', async ({ page }) => {
  await page.goto('/');
  await page.click('[data-screen=setup]');
  await chooseFirstFactor(page);
  const spec = await specOnScreen(page);
  const replied = page.waitForResponse((r) => r.url().endsWith('/api/fit'));
  await page.click('[data-testid=run-fit]');
  const body = (await (await replied).json()) as { ok: boolean; value: FitResult };
  expect(body.ok).toBe(true);
  expect(body.value.sample.assets.length).toBe((spec.assets as string[]).length);
  await expect(page.locator('[data-testid=pricing-error-chart]')).toHaveAttribute('data-drawn', /[1-9]/);
  checkBars(await barsOf(page, '[data-testid=pricing-error-chart]'), body.value.pricingErrors.map((r) => r.alphaAnnual * 100));
  // per-period view: the same bars scaled by 1/12
  await page.locator('label:has-text("annualised") input').uncheck();
  await expect.poll(async () => (await barsOf(page, '[data-testid=pricing-error-chart]')).length).toBe(body.value.pricingErrors.length);
  await expect(page.locator('.panel-sub', { hasText: 'chart in % per month' })).toBeVisible();
  checkBars(await barsOf(page, '[data-testid=pricing-error-chart]'), body.value.pricingErrors.map((r) => r.alpha * 100));
});

test('an engine error appears as a readable message with its hint', async ({ page }) => {
  await page.goto('/');
  await page.click('[data-screen=setup]');
  await chooseFirstFactor(page);
  // one test asset, two factors: fewer moments than parameters
  await page.locator('.checkgroup-head >> text=none').first().click();
  await page.locator('[data-testid=asset-list] label.check').first().click();
  await page.locator('[data-testid=factor-list] label').nth(1).click();
  await page.click('[data-testid=run-fit]');
  const note = page.locator('.error-note');
  await expect(note).toBeVisible({ timeout: 30_000 });
  await expect(note.locator('.code')).not.toHaveText('INTERNAL');
  await expect(note.locator('.error-hint')).toContainText('→');
  await shot(page, 'fit-error');
});

test('import: a file chosen in the page is uploaded, logged with its warnings, and covered', async ({ page }) => {
  const dir = path.join(root, 'test-output', 'e2e');
  mkdirSync(dir, { recursive: true });
  const file = path.join(dir, 'extra_factor.csv');
  const lines = ['date,upload_factor'];
  for (let k = 0; k < 36; k++) {
    const d = new Date(Date.UTC(2010, k + 1, 0)).toISOString().slice(0, 10);
    if (k === 20) continue; // one month missing: a gap the import reports
    lines.push(`${d},${(0.001 * ((k % 7) - 3)).toFixed(4)}`);
  }
  writeFileSync(file, `${lines.join('\n')}\n`);
  await page.goto('/');
  await page.locator('.seg label', { hasText: 'Series' }).click();
  await page.setInputFiles('[data-testid=file-input]', file);
  await expect(page.locator('[data-testid=preview-ok]')).toContainText('Reads 1 series'); // previewed first: nothing stored yet
  await page.click('[data-testid=import-confirm]');
  await expect(page.locator('.log > li').first()).toContainText('extra_factor.csv');
  await expect(page.locator('.panel .progress').first()).toHaveAttribute('data-percent', '100');
  await expect(page.locator('.datatable tbody tr', { hasText: 'upload_factor' })).toBeVisible();
  await shot(page, 'histories-import');
});

test('charts save as PNG and SVG, tables export as CSV', async ({ page }) => {
  await page.goto('/');
  await page.click('[data-screen=setup]');
  await chooseFirstFactor(page);
  await page.click('[data-testid=run-fit]');
  const chart = page.locator('[data-testid=pricing-error-chart]');
  await expect(chart).toHaveAttribute('data-drawn', /[1-9]/);
  const read = async (click: () => Promise<void>) => {
    const [download] = await Promise.all([page.waitForEvent('download'), click()]);
    const file = await download.path();
    const { readFileSync } = await import('node:fs');
    return { name: download.suggestedFilename(), bytes: readFileSync(file) };
  };
  const svg = await read(() => chart.locator('button', { hasText: 'SVG' }).click());
  expect(svg.name).toMatch(/pricing-errors\.svg$/);
  expect(svg.bytes.toString('utf8')).toMatch(/^<svg[\s\S]*<\/svg>\s*$/);
  const png = await read(() => chart.locator('button', { hasText: 'PNG' }).click());
  expect(png.name).toMatch(/pricing-errors\.png$/);
  expect([...png.bytes.subarray(0, 8)]).toEqual([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]); // PNG signature (ISO/IEC 15948)
  const params = page.locator('.datatable[data-table=parameters]');
  const csv = await read(() => params.locator('button', { hasText: 'CSV' }).click());
  const lines = csv.bytes.toString('utf8').trim().split(/\r\n/);
  expect(lines[0]).toBe('Parameter,Estimate,s.e.,t,p'); // the same headings as the screen and every export
  expect(lines.length).toBe(4);
  expect(Number(lines[1].split(',')[1])).not.toBeNaN();
});

test('the access key: the printed address opens the app and leaves the address bar; without it every call is refused', async ({ browser }) => {
  // a context of its own, without the keys the fixture puts in sessionStorage
  const address = serverAddress('demo');
  const fresh = await browser.newContext();
  try {
    const page = await fresh.newPage();
    const statuses: number[] = [];
    page.on('response', (r) => {
      if (r.url().includes('/api/')) statuses.push(r.status());
    });
    await page.goto(address);
    await expect(page.locator('.datatable tbody tr').first()).toBeVisible();
    expect(page.url()).not.toContain('key=');
    expect(statuses.length).toBeGreaterThan(0);
    expect(statuses.every((s) => s === 200)).toBe(true);
    // a reload keeps the key (this tab's sessionStorage)
    await page.reload();
    await expect(page.locator('.datatable tbody tr').first()).toBeVisible();
    // a new tab without the key is refused and says what to do
    const bare = await (await browser.newContext()).newPage();
    await bare.goto(new URL(address).origin + '/');
    await expect(bare.locator('.error-note').first()).toContainText('access key');
    await shot(bare, 'no-access-key');
    await bare.context().close();
  } finally {
    await fresh.close();
  }
});
