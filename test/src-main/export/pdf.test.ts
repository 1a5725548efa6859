import { execFileSync, spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { resultToHtml } from '../../../shared/report/html.js';
import { findChromium, htmlToPdf, pdfFromHtmlWithWebContents } from '../../../src-main/export/pdf.js';
import { CHROMIUM_PATH, HAVE_CHROMIUM } from '../../shared/report/browser.js';
import { sampleFit, sampleRecord } from '../../shared/report/sample-results.js';

const onPath = (cmd: string): string | null => {
  const r = spawnSync('sh', ['-c', `command -v ${cmd}`], { encoding: 'utf8' });
  return r.status === 0 && r.stdout.trim() ? r.stdout.trim() : null;
};

describe('PDF export', () => {
  it('finds Chromium from $DEFLATOR_CHROMIUM or PATH, and reports none clearly', async () => {
    expect(findChromium({ PATH: '' })).toBeNull();
    expect(findChromium({ DEFLATOR_CHROMIUM: path.join(tmpdir(), 'no-such-browser') })).toBeNull();
    if (HAVE_CHROMIUM) expect(findChromium({ PATH: path.dirname(CHROMIUM_PATH) })).toBe(CHROMIUM_PATH);
    const saved = process.env.PATH;
    const savedExplicit = process.env.DEFLATOR_CHROMIUM;
    process.env.PATH = '';
    delete process.env.DEFLATOR_CHROMIUM;
    try {
      await expect(htmlToPdf('<p>x</p>')).rejects.toThrow(/PDF export needs a Chromium browser/);
    } finally {
      process.env.PATH = saved;
      if (savedExplicit !== undefined) process.env.DEFLATOR_CHROMIUM = savedExplicit;
    }
  });

  it('hands the report to an Electron-like window and returns its PDF bytes', async () => {
    const seen: string[] = [];
    const pdf = await pdfFromHtmlWithWebContents('<p>x &amp; y</p>', {
      webContents: {
        loadURL: async (u) => {
          seen.push(u);
        },
        printToPDF: async (o) => {
          expect(o.printBackground).toBe(true);
          return Uint8Array.from([0x25, 0x50, 0x44, 0x46]);
        },
      },
    });
    expect(decodeURIComponent(seen[0].slice('data:text/html;charset=utf-8,'.length))).toBe('<p>x &amp; y</p>');
    expect(pdf.toString('latin1')).toBe('%PDF');
  });

  // A fit of 24 years of monthly data: the m_t series is a chart, its 288 values an appendix the PDF leaves out unless asked.
  const pdfinfoPath = onPath('pdfinfo');
  it.skipIf(!HAVE_CHROMIUM || !pdfinfoPath)(`a fit's PDF is a few pages; the m_t listing only with the appendix${HAVE_CHROMIUM && pdfinfoPath ? '' : ' (skipped: needs Chromium and pdfinfo; Debian: apt-get install chromium poppler-utils)'}`, async () => {
    const r = sampleFit();
    const periods = Array.from({ length: 288 }, (_, t) => `${2031 + Math.floor(t / 12)}-${String((t % 12) + 1).padStart(2, '0')}-28`);
    const values = periods.map((_, t) => 1 + 0.1 * Math.sin(t / 5));
    r.sdf = { periods, values, mean: 1, std: 0.07 };
    const dir = mkdtempSync(path.join(tmpdir(), 'deflator-pdf-'));
    const pages = async (appendix: boolean): Promise<number> => {
      const file = path.join(dir, `fit-${appendix}.pdf`);
      writeFileSync(file, await htmlToPdf(resultToHtml(r, sampleRecord(), { appendix, print: true }), { executablePath: CHROMIUM_PATH }));
      return Number(/Pages:\s+(\d+)/.exec(execFileSync(pdfinfoPath!, [file], { encoding: 'utf8' }))?.[1]);
    };
    const short = await pages(false);
    const long = await pages(true);
    expect(short, 'pages without the appendix').toBeLessThanOrEqual(5);
    expect(long, 'the appendix adds the m_t listing').toBeGreaterThan(short + 2);
  }, 60_000);

  // Produced with headless Debian Chromium; first page rendered by poppler's pdftoppm where installed.
  it.runIf(HAVE_CHROMIUM)('prints the HTML report to a PDF whose first page renders', async () => {
    const pdf = await htmlToPdf(resultToHtml(sampleFit(), sampleRecord()), { executablePath: CHROMIUM_PATH });
    expect(pdf.subarray(0, 5).toString('latin1')).toBe('%PDF-');
    expect(pdf.subarray(-8).toString('latin1')).toMatch(/%%EOF\s*$/);
    const dir = mkdtempSync(path.join(tmpdir(), 'deflator-pdf-'));
    const file = path.join(dir, 'report.pdf');
    writeFileSync(file, pdf);
    const pdfinfo = onPath('pdfinfo');
    if (pdfinfo) {
      const info = execFileSync(pdfinfo, [file], { encoding: 'utf8' });
      expect(Number(/Pages:\s+(\d+)/.exec(info)?.[1])).toBeGreaterThanOrEqual(2);
      expect(info).toMatch(/Page size:\s+59\d\.\d+ x 84\d\.\d+ pts \(A4\)/);
    } else console.log('pdfinfo check skipped: poppler-utils not installed (Debian: apt-get install poppler-utils)');
    const pdftoppm = onPath('pdftoppm');
    if (!pdftoppm) {
      console.log('page render check skipped: pdftoppm not installed (Debian: apt-get install poppler-utils)');
      return;
    }
    execFileSync(pdftoppm, ['-f', '1', '-l', '1', '-r', '40', '-gray', file, path.join(dir, 'page')]);
    const pgm = readFileSync(path.join(dir, 'page-1.pgm'));
    // Binary PGM: "P5\n<w> <h>\n<max>\n" then one byte per pixel; a rendered page has ink on it.
    const m = /^P5\s+(\d+)\s+(\d+)\s+(\d+)\s/.exec(pgm.subarray(0, 40).toString('latin1'));
    expect(m).not.toBeNull();
    const [w, h] = [Number(m![1]), Number(m![2])];
    const pixels = pgm.subarray(pgm.length - w * h);
    const dark = pixels.reduce((n, v) => n + (v < 128 ? 1 : 0), 0);
    expect(dark / (w * h)).toBeGreaterThan(0.005);
    expect(dark / (w * h)).toBeLessThan(0.5);
  });
});
