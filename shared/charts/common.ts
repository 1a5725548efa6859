/** Axis, grid and tooltip defaults shared by every chart builder. */
import { FONT_FAMILY, PALETTE } from './palette.js';

/** A number for an axis label or tooltip: fixed decimals, never NaN. */
export function num(x: number, decimals: number): string {
  if (!Number.isFinite(x)) return '—';
  const s = x.toFixed(decimals);
  return /^-0\.?0*$/.test(s) ? s.slice(1) : s;
}

export const textStyle = { fontFamily: FONT_FAMILY, color: PALETTE.ink, fontSize: 11 };

export function valueAxis(name: string, extra: Record<string, unknown> = {}): Record<string, unknown> {
  return {
    type: 'value',
    name,
    nameLocation: 'middle',
    nameGap: 44,
    nameTextStyle: { color: PALETTE.muted, fontSize: 11 },
    axisLine: { show: false },
    axisTick: { show: false },
    axisLabel: { color: PALETTE.muted, fontSize: 10 },
    splitLine: { lineStyle: { color: PALETTE.grid } },
    ...extra,
  };
}

export function categoryAxis(data: string[], extra: Record<string, unknown> = {}): Record<string, unknown> {
  const many = data.length > 24;
  return {
    type: 'category',
    data,
    axisLine: { lineStyle: { color: PALETTE.faint } },
    axisTick: { show: false },
    axisLabel: { color: PALETTE.muted, fontSize: 10, rotate: many ? 60 : data.length > 10 ? 35 : 0, interval: data.length > 60 ? Math.ceil(data.length / 40) - 1 : 0 },
    ...extra,
  };
}

export function baseOption(): Record<string, unknown> {
  return {
    animation: false,
    textStyle,
    color: [PALETTE.primary, PALETTE.secondary, PALETTE.tertiary, PALETTE.quaternary],
    tooltip: {
      trigger: 'axis',
      confine: true,
      backgroundColor: '#ffffff',
      borderColor: PALETTE.rule,
      textStyle: { color: PALETTE.ink, fontSize: 11, fontFamily: FONT_FAMILY },
      extraCssText: 'box-shadow: 0 2px 8px rgba(29,36,48,0.12);',
    },
  };
}
