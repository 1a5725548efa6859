/**
 * The same flow against the Electron app (playwright-core's _electron), where an Electron
 * binary is installed; elsewhere the test is skipped and says why.
 */
import { expect, test } from '@playwright/test';
import { _electron as electron } from 'playwright-core';
import { existsSync, mkdtempSync, readFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { runDemoFlow } from './flow.js';

const root = path.resolve(import.meta.dirname, '../..');

function electronBinary(): string | undefined {
  const dir = path.join(root, 'node_modules', 'electron');
  const pathFile = path.join(dir, 'path.txt');
  if (!existsSync(pathFile)) return undefined;
  const exe = path.join(dir, 'dist', readFileSync(pathFile, 'utf8').trim());
  return existsSync(exe) ? exe : undefined;
}

test('Electron app: the same flow over IPC', async () => {
  const exe = electronBinary();
  const reason = 'the Electron binary is not installed (node_modules/electron has no path.txt/dist), so the Electron run is skipped; the browser specs cover the same flow';
  if (!exe) console.log(`electron.spec: ${reason}`);
  test.skip(!exe, reason);
  const home = mkdtempSync(path.join(os.tmpdir(), 'deflator-electron-'));
  const app = await electron.launch({
    executablePath: exe,
    args: [path.join(root, 'dist', 'main.js'), `--user-data-dir=${home}`],
    env: { ...process.env, DEFLATOR_HOME: home },
  });
  try {
    const page = await app.firstWindow();
    await page.setViewportSize({ width: 1440, height: 900 });
    expect(await page.evaluate(() => typeof (window as unknown as { deflator?: unknown }).deflator)).toBe('object');
    expect(await page.evaluate(() => typeof (window as unknown as { require?: unknown }).require)).toBe('undefined');
    await runDemoFlow(page, 'electron-');
  } finally {
    await app.close();
  }
});
