/**
 * PDF of the HTML report. In the CLI and tests: headless Chromium through
 * playwright-core (page.pdf), where a Chromium is installed. In the desktop app:
 * Electron's own printToPDF through `pdfFromHtmlWithWebContents`, which takes the
 * window structurally so that this file never imports electron.
 */
import { existsSync } from 'node:fs';
import { createRequire } from 'node:module';
import path from 'node:path';
import { DeflatorError } from '../../shared/errors.js';

/** Flags for a headless Chromium that must not reach the network. */
export const CHROMIUM_ARGS = [
  '--no-sandbox',
  '--disable-gpu',
  '--disable-quic',
  '--no-first-run',
  '--disable-background-networking',
  '--disable-component-update',
  '--disable-sync',
];

const CANDIDATES = ['chromium', 'chromium-browser', 'google-chrome', 'google-chrome-stable'];

/** A Chromium executable: $DEFLATOR_CHROMIUM, else the first of the usual names on PATH; null when none. */
export function findChromium(env: NodeJS.ProcessEnv = process.env): string | null {
  const explicit = env.DEFLATOR_CHROMIUM;
  if (explicit) return existsSync(explicit) ? explicit : null;
  for (const dir of (env.PATH ?? '').split(path.delimiter)) {
    if (!dir) continue;
    for (const name of CANDIDATES) {
      const p = path.join(dir, name);
      if (existsSync(p)) return p;
    }
  }
  return null;
}

export const PDF_OPTIONS = {
  format: 'A4' as const,
  printBackground: true,
  margin: { top: '14mm', bottom: '14mm', left: '12mm', right: '12mm' },
};

/** Renders the HTML with headless Chromium and returns the PDF bytes. */
export async function htmlToPdf(html: string, opts: { executablePath?: string } = {}): Promise<Buffer> {
  const executablePath = opts.executablePath ?? findChromium();
  if (!executablePath) {
    throw new DeflatorError(
      'DATA_MISSING',
      'PDF export needs a Chromium browser and none was found (looked for $DEFLATOR_CHROMIUM, then chromium, chromium-browser, google-chrome on PATH)',
      'install one (Debian: apt-get install chromium) or set DEFLATOR_CHROMIUM to its path; or export --format html and print that file',
    );
  }
  // required when needed, not imported: the command line's bundle is CommonJS run from V8's code cache (src-main/cli/launch.ts)
  const { chromium } = createRequire(import.meta.url)('playwright-core') as typeof import('playwright-core');
  const browser = await chromium.launch({ executablePath, headless: true, args: CHROMIUM_ARGS });
  try {
    const page = await browser.newPage();
    // The report is self-contained; refuse any request it might still make.
    await page.route('**/*', (route) => route.abort());
    await page.setContent(html, { waitUntil: 'load' });
    return await page.pdf(PDF_OPTIONS);
  } finally {
    await browser.close();
  }
}

/** The part of an Electron BrowserWindow that printing needs. */
export interface PrintableWindow {
  webContents: {
    loadURL(url: string): Promise<void>;
    printToPDF(options: { printBackground?: boolean; pageSize?: 'A4' }): Promise<Uint8Array>;
  };
}

/**
 * For the desktop app: the same PDF through Electron's printToPDF. The caller creates a
 * hidden BrowserWindow (offscreen, javascript disabled) and passes it here.
 */
export async function pdfFromHtmlWithWebContents(html: string, win: PrintableWindow): Promise<Buffer> {
  await win.webContents.loadURL(`data:text/html;charset=utf-8,${encodeURIComponent(html)}`);
  const bytes = await win.webContents.printToPDF({ printBackground: true, pageSize: 'A4' });
  return Buffer.from(bytes);
}
