/** Headless Chromium for the export tests (playwright-core, no browser download): Debian's, found on PATH or by $DEFLATOR_CHROMIUM. */
import { chromium, type Browser } from 'playwright-core';
import { CHROMIUM_ARGS, findChromium } from '../../../src-main/export/pdf.js';

export const CHROMIUM_PATH = findChromium() ?? '';
export const HAVE_CHROMIUM = CHROMIUM_PATH !== '';

export async function launch(): Promise<Browser> {
  return chromium.launch({ executablePath: CHROMIUM_PATH, headless: true, args: CHROMIUM_ARGS });
}
