/**
 * Scatter labels in static exports never pile up: measured by the browser that draws
 * them (headless Debian Chromium, SVG getBBox of each label and point), no label covers
 * another label or any point. The points are a seeded, invented cloud: a tight cluster
 * where most labels would collide, and a few outliers.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Browser, Page } from 'playwright-core';
import { scatterChart } from '../../../shared/report/svg.js';
import { HAVE_CHROMIUM, launch } from './browser.js';

function points(): { label: string; x: number; y: number }[] {
  let s = 20261202;
  const u = () => ((s = (s * 1664525 + 1013904223) >>> 0) / 2 ** 32);
  const cluster = Array.from({ length: 26 }, (_, i) => ({ label: `cluster-asset-${i + 1}`, x: 5 + 2 * u(), y: 8 + 4 * u() }));
  return [...cluster, { label: 'far-above', x: 7, y: 22 }, { label: 'far-below', x: 7, y: 0 }, { label: 'near-far-above', x: 7.4, y: 21.5 }, { label: 'left-one', x: 1, y: 3 }];
}

describe.skipIf(!HAVE_CHROMIUM)(`scatter labels${HAVE_CHROMIUM ? '' : ' (skipped: no chromium on PATH; Debian: apt-get install chromium)'}`, () => {
  let browser: Browser;
  let page: Page;
  beforeAll(async () => {
    browser = await launch();
    page = await browser.newPage();
  }, 60_000);
  afterAll(async () => {
    await browser?.close();
  });

  it('no label overlaps another label or a point, even where the labelled points cluster', async () => {
    const ps = points();
    // Label every point: the hardest case (the reports label the six farthest from the line).
    const svg = scatterChart({ id: 's', title: 'Predicted and realised', xLabel: 'predicted', yLabel: 'realised', points: ps, diagonal: true });
    await page.setContent(`<!doctype html><body>${svg}</body>`);
    const boxes = await page.$$eval('svg text.point-label, svg circle.point', (els) =>
      els.map((e) => {
        const b = (e as unknown as { getBBox(): { x: number; y: number; width: number; height: number } }).getBBox();
        return { kind: e.tagName, label: e.textContent ?? e.getAttribute('data-label') ?? '', x0: b.x, y0: b.y, x1: b.x + b.width, y1: b.y + b.height };
      }),
    );
    const labels = boxes.filter((b) => b.kind === 'text');
    const dots = boxes.filter((b) => b.kind === 'circle');
    expect(labels.length, 'some labels are placed').toBeGreaterThanOrEqual(6);
    const overlap = (a: (typeof boxes)[number], b: (typeof boxes)[number]) => Math.min(a.x1, b.x1) - Math.max(a.x0, b.x0) > 0.5 && Math.min(a.y1, b.y1) - Math.max(a.y0, b.y0) > 0.5;
    const clashes: string[] = [];
    labels.forEach((a, i) => {
      labels.slice(i + 1).forEach((b) => overlap(a, b) && clashes.push(`label ${a.label} / label ${b.label}`));
      dots.forEach((d) => overlap(a, d) && clashes.push(`label ${a.label} / point ${d.label}`));
    });
    expect(clashes).toEqual([]);
    // The outliers, with room around them, keep their labels.
    expect(labels.map((l) => l.label)).toEqual(expect.arrayContaining(['far-above', 'far-below', 'left-one']));
    // Labels are drawn after every point, so none is painted over.
    const order = await page.$$eval('svg text.point-label, svg circle.point', (els) => els.map((e) => e.tagName));
    expect(order.lastIndexOf('circle')).toBeLessThan(order.indexOf('text'));
  }, 60_000);
});
