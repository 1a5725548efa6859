/**
 * A merged batch on the comparison screen: the 28-task demo grid is planned, run in two
 * shards and merged into the database the server has open (by the command line, as a
 * user would); the screen lists it, ranks its models, and the rows are the ranking
 * `deflator batch merge --json` gives, in the same order, with the same HJ distances.
 */
import { execFileSync } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import type { BatchResult } from '../../shared/results.js';
import { expect, test } from './fixtures.js';
import { shot } from './flow.js';

const root = path.resolve(import.meta.dirname, '../..');
const DB = path.join(root, 'test-output', 'e2e', 'demo.db');
const cli = (args: string[]) => execFileSync(process.execPath, [path.join(root, 'dist/cli.js'), ...args], { encoding: 'utf8', cwd: root });

test('the comparison screen opens a merged batch and ranks its tasks as merge does', async ({ page }) => {
  const dir = mkdtempSync(path.join(tmpdir(), 'deflator-e2e-batch-'));
  try {
    const folder = path.join(dir, 'batch');
    cli(['batch', 'plan', 'sample-data/specs/grid-factor-search.json', '--db', DB, '--out', folder]);
    cli(['batch', 'run', folder, '--shard', '0/2', '--threads', '1']);
    cli(['batch', 'run', folder, '--shard', '1/2', '--threads', '1']);
    const merged = JSON.parse(cli(['batch', 'merge', folder, '--db', DB, '--json'])) as BatchResult & { run: number; ranking: Record<string, number[]> };
    const byTask = new Map(merged.models.map((m) => [m.task, m]));

    await page.goto('/');
    await page.click('[data-screen=compare]');
    const pick = page.locator('[data-testid=batch-pick]');
    await expect(pick.locator(`option[value="${merged.run}"]`)).toHaveCount(1);
    await pick.selectOption(String(merged.run));
    await expect(page.locator('[data-testid=batch-summary]')).toContainText('28 tasks, 28 fitted');
    const rows = page.locator('[data-testid=compare-models] tbody tr');
    await expect(rows).toHaveCount(25);
    const expectOrder = async (by: 'hj' | 'oos') => {
      const tasks = (await rows.locator('td:nth-child(2)').allTextContents()).map((t) => Number(t.trim()));
      expect(tasks).toEqual(merged.ranking[by].slice(0, 25));
      expect((await rows.first().locator('td:nth-child(1)').textContent())?.trim()).toBe('1');
    };
    await expectOrder('hj');
    // the screen's HJ column holds the merged numbers (full precision behind the display)
    const first = byTask.get(merged.ranking.hj[0])!;
    await expect(rows.first()).toContainText(first.label);
    await shot(page, 'compare-batch');
    await page.locator('[data-testid=batch-rank]').selectOption('oos');
    await expect(page.locator('[data-testid=batch-summary]')).toContainText('out-of-sample RMSE');
    await expectOrder('oos');
    await expect(page.locator('[data-caution]').first()).toBeVisible();
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
});
