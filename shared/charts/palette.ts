/** The app's restrained chart palette (also used by the renderer's stylesheet). */
export const PALETTE = {
  ink: '#1d2430',
  muted: '#5b6574',
  faint: '#9aa2ad',
  rule: '#e3e1da',
  grid: '#efede7',
  /** Positive values, first series. */
  primary: '#2b5f7d',
  /** Negative values. */
  negative: '#a8483a',
  /** Second series. */
  secondary: '#c07a2c',
  tertiary: '#5d8a4e',
  quaternary: '#7a5c99',
  band: 'rgba(43,95,125,0.16)',
  bound: 'rgba(192,122,44,0.12)',
} as const;

/** Series colours in order of use. */
export const SERIES_COLORS = [PALETTE.primary, PALETTE.secondary, PALETTE.tertiary, PALETTE.quaternary, '#4f7f8f', '#9c6b4e', '#6f7f3a', '#8a8f98'];

export const FONT_FAMILY = 'ui-sans-serif, system-ui, -apple-system, "Segoe UI", Roboto, "Noto Sans", "Helvetica Neue", Arial, sans-serif';
