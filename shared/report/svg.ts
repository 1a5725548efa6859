/**
 * A small server-side SVG chart generator for the self-contained HTML report (and any
 * other place that needs a static chart): bars with error whiskers, a scatter with a
 * 45-degree line, and lines over labelled steps. Output is a plain <svg> string with
 * no scripts, fonts or external references. Every mark carries a data-* attribute with
 * its exact value, so a reader can check the chart against the result.
 */
import { exactNumber, significant } from '../present/format.js';

export function xmlEscape(s: string): string {
  return s.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c] as string);
}

/** Round tick values covering [lo, hi] (Heckbert's "nice numbers", Graphics Gems 1990). */
export function niceTicks(lo: number, hi: number, count = 5): number[] {
  if (!(hi > lo)) {
    const pad = lo === 0 ? 1 : Math.abs(lo) * 0.1;
    lo -= pad;
    hi += pad;
  }
  const nice = (x: number, round: boolean): number => {
    const e = Math.floor(Math.log10(x));
    const f = x / 10 ** e;
    const nf = round ? (f < 1.5 ? 1 : f < 3 ? 2 : f < 7 ? 5 : 10) : f <= 1 ? 1 : f <= 2 ? 2 : f <= 5 ? 5 : 10;
    return nf * 10 ** e;
  };
  const step = nice(nice(hi - lo, false) / Math.max(1, count - 1), true);
  const start = Math.floor(lo / step) * step;
  const ticks: number[] = [];
  for (let v = start; v <= hi + step * 0.5; v += step) ticks.push(Math.abs(v) < step * 1e-9 ? 0 : Number(v.toPrecision(12)));
  if (ticks[ticks.length - 1] < hi) ticks.push(Number((ticks[ticks.length - 1] + step).toPrecision(12)));
  return ticks;
}

interface Frame {
  width: number;
  height: number;
  left: number;
  right: number;
  top: number;
  bottom: number;
}

const FONT = 'font-family="Helvetica, Arial, sans-serif" font-size="11"';
const PALETTE = ['#2b6f9e', '#c2693b', '#4e8a3e', '#8a4e8a', '#9e8a2b', '#3b9ea0'];

function scale(d0: number, d1: number, r0: number, r1: number): (x: number) => number {
  const k = d1 === d0 ? 0 : (r1 - r0) / (d1 - d0);
  return (x) => r0 + (x - d0) * k;
}

const f1 = (x: number): string => (Math.round(x * 10) / 10).toString();

function open(id: string, title: string, f: Frame, kind: string): string[] {
  return [
    `<svg xmlns="http://www.w3.org/2000/svg" id="${xmlEscape(id)}" class="chart" data-chart="${kind}" width="${f.width}" height="${f.height}" viewBox="0 0 ${f.width} ${f.height}" role="img" aria-label="${xmlEscape(title)}">`,
    `<title>${xmlEscape(title)}</title>`,
    `<rect x="0" y="0" width="${f.width}" height="${f.height}" fill="#ffffff"/>`,
    `<text x="${f.width / 2}" y="16" text-anchor="middle" ${FONT} font-size="13" font-weight="bold">${xmlEscape(title)}</text>`,
  ];
}

function yAxis(out: string[], f: Frame, ticks: number[], y: (v: number) => number, label: string): void {
  for (const t of ticks) {
    const yy = f1(y(t));
    out.push(`<line x1="${f.left}" x2="${f.width - f.right}" y1="${yy}" y2="${yy}" stroke="#e3e3e3"/>`);
    out.push(`<text x="${f.left - 6}" y="${yy}" dy="4" text-anchor="end" ${FONT}>${xmlEscape(significant(t, 4))}</text>`);
  }
  out.push(`<line x1="${f.left}" x2="${f.left}" y1="${f.top}" y2="${f.height - f.bottom}" stroke="#555"/>`);
  const cy = (f.top + f.height - f.bottom) / 2;
  out.push(`<text x="14" y="${cy}" transform="rotate(-90 14 ${cy})" text-anchor="middle" ${FONT}>${xmlEscape(label)}</text>`);
}

export interface BarDatum {
  label: string;
  value: number;
  /** Whisker ends (e.g. value ± 1.96 s.e.); omit for a plain bar. */
  low?: number;
  high?: number;
}

/**
 * Labels that never pile up: the `k` items farthest out by `size` (largest first); a
 * chart labels these and leaves the rest to the table beside it.
 */
export function standOut<T>(items: readonly T[], size: (x: T) => number, k = 6): Set<T> {
  return new Set([...items].sort((a, b) => size(b) - size(a)).slice(0, k));
}

/** A bar's label under the axis, turned 40 degrees (smaller where there are many bars). */
function categoryLabel(out: string[], f: Frame, cx: number, label: string, n: number): void {
  const ly = f.height - f.bottom + 12;
  out.push(`<text x="${f1(cx)}" y="${ly}" transform="rotate(-40 ${f1(cx)} ${ly})" text-anchor="end" ${FONT}${n > 24 ? ' font-size="8"' : ''}>${xmlEscape(label)}</text>`);
}

/** Most bars a chart labels one by one; beyond it, only `labelled` bars carry a label. */
export const MAX_BAR_LABELS = 40;

/** Vertical bars from zero with optional whiskers; one bar per datum. */
export function barChart(opts: { id: string; title: string; yLabel: string; bars: BarDatum[]; width?: number; height?: number; labelled?: ReadonlySet<string> }): string {
  const f: Frame = { width: opts.width ?? 640, height: opts.height ?? 340, left: 64, right: 16, top: 28, bottom: 84 };
  const vals = opts.bars.flatMap((b) => [b.value, b.low ?? b.value, b.high ?? b.value, 0]);
  const ticks = niceTicks(Math.min(...vals), Math.max(...vals));
  const y = scale(ticks[0], ticks[ticks.length - 1], f.height - f.bottom, f.top);
  const out = open(opts.id, opts.title, f, 'bars');
  yAxis(out, f, ticks, y, opts.yLabel);
  const n = Math.max(1, opts.bars.length);
  const band = (f.width - f.left - f.right) / n;
  const y0 = y(0);
  opts.bars.forEach((b, i) => {
    const cx = f.left + band * (i + 0.5);
    const w = Math.max(2, band * 0.6);
    const top = Math.min(y(b.value), y0);
    const h = Math.max(0.5, Math.abs(y(b.value) - y0));
    out.push(
      `<rect class="bar" x="${f1(cx - w / 2)}" y="${f1(top)}" width="${f1(w)}" height="${f1(h)}" fill="${b.value < 0 ? PALETTE[1] : PALETTE[0]}" data-label="${xmlEscape(b.label)}" data-value="${exactNumber(b.value)}"><title>${xmlEscape(`${b.label}: ${significant(b.value, 6)}`)}</title></rect>`,
    );
    if (b.low !== undefined && b.high !== undefined) {
      const yl = f1(y(b.low));
      const yh = f1(y(b.high));
      const cap = f1(Math.min(w / 2, 6));
      out.push(
        `<g class="whisker" stroke="#222" data-label="${xmlEscape(b.label)}" data-low="${exactNumber(b.low)}" data-high="${exactNumber(b.high)}"><line x1="${f1(cx)}" x2="${f1(cx)}" y1="${yl}" y2="${yh}"/><line x1="${f1(cx - Number(cap))}" x2="${f1(cx + Number(cap))}" y1="${yl}" y2="${yl}"/><line x1="${f1(cx - Number(cap))}" x2="${f1(cx + Number(cap))}" y1="${yh}" y2="${yh}"/></g>`,
      );
    }
    if (n <= MAX_BAR_LABELS || (opts.labelled?.has(b.label) ?? false)) categoryLabel(out, f, cx, b.label, n);
  });
  out.push(`<line x1="${f.left}" x2="${f.width - f.right}" y1="${f1(y0)}" y2="${f1(y0)}" stroke="#555"/>`);
  out.push('</svg>');
  return out.join('\n');
}

export interface ScatterPoint {
  label: string;
  x: number;
  y: number;
}

/** Points with labels; `diagonal` draws the y = x line (predicted = realised), `fitLine` the line a + b x over the points' x range. */
export function scatterChart(opts: { id: string; title: string; xLabel: string; yLabel: string; points: ScatterPoint[]; diagonal?: boolean; fitLine?: { intercept: number; slope: number }; width?: number; height?: number; labelled?: ReadonlySet<string> }): string {
  const f: Frame = { width: opts.width ?? 480, height: opts.height ?? 400, left: 64, right: 20, top: 28, bottom: 48 };
  const xs = opts.points.map((p) => p.x);
  const ys = opts.points.map((p) => p.y);
  let lo = Math.min(...xs, ...(opts.diagonal ? ys : []));
  let hi = Math.max(...xs, ...(opts.diagonal ? ys : []));
  const xt = niceTicks(lo, hi);
  if (opts.diagonal) {
    lo = xt[0];
    hi = xt[xt.length - 1];
  }
  const fit = opts.fitLine;
  const lineYs = fit ? [fit.intercept + fit.slope * Math.min(...xs), fit.intercept + fit.slope * Math.max(...xs)] : [];
  const yt = opts.diagonal ? xt : niceTicks(Math.min(...ys, ...lineYs), Math.max(...ys, ...lineYs));
  const x = scale(xt[0], xt[xt.length - 1], f.left, f.width - f.right);
  const y = scale(yt[0], yt[yt.length - 1], f.height - f.bottom, f.top);
  const out = open(opts.id, opts.title, f, 'scatter');
  yAxis(out, f, yt, y, opts.yLabel);
  for (const t of xt) {
    out.push(`<text x="${f1(x(t))}" y="${f.height - f.bottom + 14}" text-anchor="middle" ${FONT}>${xmlEscape(significant(t, 4))}</text>`);
  }
  out.push(`<line x1="${f.left}" x2="${f.width - f.right}" y1="${f.height - f.bottom}" y2="${f.height - f.bottom}" stroke="#555"/>`);
  out.push(`<text x="${(f.left + f.width - f.right) / 2}" y="${f.height - 10}" text-anchor="middle" ${FONT}>${xmlEscape(opts.xLabel)}</text>`);
  if (opts.diagonal) {
    const a = Math.max(xt[0], yt[0]);
    const b = Math.min(xt[xt.length - 1], yt[yt.length - 1]);
    out.push(`<line class="diagonal" x1="${f1(x(a))}" y1="${f1(y(a))}" x2="${f1(x(b))}" y2="${f1(y(b))}" stroke="#999" stroke-dasharray="4 3"/>`);
  }
  if (fit) {
    const a = Math.min(...xs);
    const b = Math.max(...xs);
    out.push(
      `<line class="fit" x1="${f1(x(a))}" y1="${f1(y(fit.intercept + fit.slope * a))}" x2="${f1(x(b))}" y2="${f1(y(fit.intercept + fit.slope * b))}" stroke="${PALETTE[1]}" stroke-width="1.5" data-intercept="${exactNumber(fit.intercept)}" data-slope="${exactNumber(fit.slope)}"/>`,
    );
  }
  // Labels never pile up: each named point's label goes right of it, else left, above or below,
  // clear of every point and of the labels already placed; one that finds no free place is left
  // out (every point is in the table beside the chart). Labels are drawn after the points, on top.
  const dots = opts.points.map((p) => ({ x0: x(p.x) - 4, y0: y(p.y) - 4, x1: x(p.x) + 4, y1: y(p.y) + 4 }));
  const placed: { x0: number; y0: number; x1: number; y1: number }[] = [];
  const hit = (a: { x0: number; y0: number; x1: number; y1: number }, b: typeof a) => b.x0 < a.x1 && a.x0 < b.x1 && b.y0 < a.y1 && a.y0 < b.y1;
  const labelAt = (px: number, py: number, text: string): { x: number; y: number; anchor: string } | undefined => {
    const w = 5 * text.length + 2;
    const tries = [
      { x: px + 6, y: py + 3, anchor: 'start', x0: px + 6, x1: px + 6 + w },
      { x: px - 6, y: py + 3, anchor: 'end', x0: px - 6 - w, x1: px - 6 },
      { x: px + 6, y: py - 7, anchor: 'start', x0: px + 6, x1: px + 6 + w },
      { x: px - 6, y: py - 7, anchor: 'end', x0: px - 6 - w, x1: px - 6 },
      { x: px + 6, y: py + 13, anchor: 'start', x0: px + 6, x1: px + 6 + w },
      { x: px - 6, y: py + 13, anchor: 'end', x0: px - 6 - w, x1: px - 6 },
      { x: px, y: py - 9, anchor: 'middle', x0: px - w / 2, x1: px + w / 2 },
      { x: px, y: py + 16, anchor: 'middle', x0: px - w / 2, x1: px + w / 2 },
    ];
    for (const t of tries) {
      const box = { x0: t.x0 - 1, y0: t.y - 10, x1: t.x1 + 1, y1: t.y + 3 };
      if (box.x0 < f.left || box.x1 > f.width - f.right + 40 || box.y0 < f.top || box.y1 > f.height - f.bottom) continue;
      if (placed.some((b) => hit(box, b)) || dots.some((d) => hit(box, d))) continue;
      placed.push(box);
      return { x: t.x, y: t.y, anchor: t.anchor };
    }
    return undefined;
  };
  const labels: string[] = [];
  for (const p of opts.points) {
    out.push(
      `<circle class="point" cx="${f1(x(p.x))}" cy="${f1(y(p.y))}" r="4" fill="${PALETTE[0]}" data-label="${xmlEscape(p.label)}" data-x="${exactNumber(p.x)}" data-y="${exactNumber(p.y)}"><title>${xmlEscape(`${p.label}: ${significant(p.x, 6)}, ${significant(p.y, 6)}`)}</title></circle>`,
    );
    if (!opts.labelled || opts.labelled.has(p.label)) {
      const at = labelAt(x(p.x), y(p.y), p.label);
      if (at) labels.push(`<text class="point-label" x="${f1(at.x)}" y="${f1(at.y)}" text-anchor="${at.anchor}" ${FONT} font-size="9" fill="#333">${xmlEscape(p.label)}</text>`);
    }
  }
  out.push(...labels);
  out.push('</svg>');
  return out.join('\n');
}

export interface StackedBar {
  label: string;
  /** One value per part, stacked from zero in order (positive parts upward, negative downward). */
  parts: (number | null)[];
  /** Drawn as a marker on the bar (e.g. the parts' sum). */
  marker?: number;
}

/** Bars stacked from parts (each part a colour, named in the legend), with an optional marker per bar. */
export function stackedBarChart(opts: { id: string; title: string; yLabel: string; partNames: string[]; bars: StackedBar[]; markerName?: string; width?: number; height?: number }): string {
  const f: Frame = { width: opts.width ?? 640, height: opts.height ?? 340, left: 64, right: 130, top: 28, bottom: 84 };
  const ends: number[] = [0];
  for (const b of opts.bars) {
    let up = 0;
    let down = 0;
    for (const v of b.parts) if (v !== null && Number.isFinite(v)) (v >= 0 ? (up += v) : (down += v));
    ends.push(up, down, ...(b.marker !== undefined ? [b.marker] : []));
  }
  const ticks = niceTicks(Math.min(...ends), Math.max(...ends));
  const y = scale(ticks[0], ticks[ticks.length - 1], f.height - f.bottom, f.top);
  const out = open(opts.id, opts.title, f, 'stacked-bars');
  yAxis(out, f, ticks, y, opts.yLabel);
  const n = Math.max(1, opts.bars.length);
  const band = (f.width - f.left - f.right) / n;
  opts.bars.forEach((b, i) => {
    const cx = f.left + band * (i + 0.5);
    const w = Math.max(2, band * 0.6);
    let up = 0;
    let down = 0;
    b.parts.forEach((v, k) => {
      if (v === null || !Number.isFinite(v)) return;
      const from = v >= 0 ? up : down;
      const to = from + v;
      if (v >= 0) up = to;
      else down = to;
      const top = Math.min(y(from), y(to));
      out.push(
        `<rect class="bar" x="${f1(cx - w / 2)}" y="${f1(top)}" width="${f1(w)}" height="${f1(Math.max(0.5, Math.abs(y(to) - y(from))))}" fill="${PALETTE[k % PALETTE.length]}" data-label="${xmlEscape(b.label)}" data-part="${xmlEscape(opts.partNames[k] ?? '')}" data-value="${exactNumber(v)}"><title>${xmlEscape(`${b.label}, ${opts.partNames[k] ?? ''}: ${significant(v, 6)}`)}</title></rect>`,
      );
    });
    if (b.marker !== undefined) {
      const my = f1(y(b.marker));
      out.push(`<path class="marker" d="M${f1(cx)},${Number(my) - 5} L${f1(cx + 5)},${my} L${f1(cx)},${Number(my) + 5} L${f1(cx - 5)},${my} Z" fill="#222" data-label="${xmlEscape(b.label)}" data-value="${exactNumber(b.marker)}"/>`);
    }
    if (n <= MAX_BAR_LABELS) categoryLabel(out, f, cx, b.label, n);
  });
  out.push(`<line x1="${f.left}" x2="${f.width - f.right}" y1="${f1(y(0))}" y2="${f1(y(0))}" stroke="#555"/>`);
  const legend = [...opts.partNames.map((name, k) => ({ name, colour: PALETTE[k % PALETTE.length] })), ...(opts.markerName ? [{ name: opts.markerName, colour: '#222' }] : [])];
  legend.forEach((l, k) => {
    const ly = f.top + 14 * k + 6;
    out.push(`<rect x="${f.width - f.right + 8}" y="${ly - 5}" width="12" height="10" fill="${l.colour}"/>`);
    out.push(`<text x="${f.width - f.right + 24}" y="${ly + 4}" ${FONT}>${xmlEscape(l.name)}</text>`);
  });
  out.push('</svg>');
  return out.join('\n');
}

export interface LineSeries {
  name: string;
  values: number[];
}

/** One line per series over shared step labels (e.g. window ends), with a legend. */
export function lineChart(opts: { id: string; title: string; yLabel: string; steps: string[]; series: LineSeries[]; width?: number; height?: number; showLegend?: boolean }): string {
  const f: Frame = { width: opts.width ?? 640, height: opts.height ?? 320, left: 64, right: opts.showLegend === false ? 20 : 120, top: 28, bottom: 48 };
  const all = opts.series.flatMap((s) => s.values);
  const yt = niceTicks(Math.min(...all), Math.max(...all));
  const n = opts.steps.length;
  const x = scale(0, Math.max(1, n - 1), f.left, f.width - f.right);
  const y = scale(yt[0], yt[yt.length - 1], f.height - f.bottom, f.top);
  const out = open(opts.id, opts.title, f, 'lines');
  yAxis(out, f, yt, y, opts.yLabel);
  out.push(`<line x1="${f.left}" x2="${f.width - f.right}" y1="${f.height - f.bottom}" y2="${f.height - f.bottom}" stroke="#555"/>`);
  const every = Math.max(1, Math.ceil(n / 6));
  opts.steps.forEach((s, i) => {
    if (i % every === 0 || i === n - 1) out.push(`<text x="${f1(x(i))}" y="${f.height - f.bottom + 14}" text-anchor="middle" ${FONT} font-size="9">${xmlEscape(s)}</text>`);
  });
  opts.series.forEach((s, k) => {
    const colour = PALETTE[k % PALETTE.length];
    const d = s.values.map((v, i) => `${i === 0 ? 'M' : 'L'}${f1(x(i))},${f1(y(v))}`).join(' ');
    if (opts.showLegend === false) {
      out.push(`<path class="line" d="${d}" fill="none" stroke="${colour}" stroke-width="1.2" data-series="${xmlEscape(s.name)}" data-values="${s.values.map(exactNumber).join(' ')}"/>`);
      return;
    }
    out.push(`<path class="line" d="${d}" fill="none" stroke="${colour}" stroke-width="1.5" data-series="${xmlEscape(s.name)}" data-values="${s.values.map(exactNumber).join(' ')}"/>`);
    const ly = f.top + 14 * k + 6;
    out.push(`<line x1="${f.width - f.right + 8}" x2="${f.width - f.right + 24}" y1="${ly}" y2="${ly}" stroke="${colour}" stroke-width="2"/>`);
    out.push(`<text x="${f.width - f.right + 28}" y="${ly + 4}" ${FONT}>${xmlEscape(s.name)}</text>`);
  });
  out.push('</svg>');
  return out.join('\n');
}
