/** Headless Debian Chromium for the export tests (playwright-core, no browser download). */
import { existsSync } from 'node:fs';
import { chromium, type Browser } from 'playwright-core';

export const CHROMIUM_PATH = process.env.DEFLATOR_CHROMIUM ?? '/usr/bin/chromium';
export const HAVE_CHROMIUM = existsSync(CHROMIUM_PATH);

export async function launch(): Promise<Browser> {
  return chromium.launch({
    executablePath: CHROMIUM_PATH,
    headless: true,
    args: ['--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run', '--disable-background-networking', '--disable-component-update', '--disable-sync'],
  });
}
