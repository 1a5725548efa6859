/**
 * The slice of the ECharts option format the chart builders produce. Declared here so
 * the domain core needs no chart library typings; the renderer hands these objects to
 * ECharts as they are.
 */
export type Json = string | number | boolean | null | Json[] | { [k: string]: Json };

export interface SeriesOption {
  type: 'bar' | 'line' | 'scatter' | 'custom';
  name?: string;
  data: unknown[];
  [key: string]: unknown;
}

export interface ChartOption {
  /** Chart identity, for file names when saving and for tests. */
  id: string;
  grid?: unknown;
  xAxis: unknown;
  yAxis: unknown;
  series: SeriesOption[];
  [key: string]: unknown;
}

/** The part of ECharts' custom-series API a renderItem function uses. */
export interface CustomApi {
  value(dim: number): number;
  coord(point: [number, number]): number[];
  size?(point: [number, number]): number[];
}
