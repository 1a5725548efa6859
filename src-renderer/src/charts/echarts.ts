/**
 * The one place that registers ECharts modules: only the chart types and components the
 * screens use, and the SVG renderer (crisp in exports, inspectable in tests).
 */
import { init, use } from 'echarts/core';
import type { ECharts, EChartsCoreOption } from 'echarts/core';
import { BarChart, CustomChart, LineChart, ScatterChart } from 'echarts/charts';
import { AxisPointerComponent, DataZoomComponent, GridComponent, LegendComponent, TitleComponent, TooltipComponent } from 'echarts/components';
import { SVGRenderer } from 'echarts/renderers';
import { LabelLayout } from 'echarts/features';

use([BarChart, CustomChart, LineChart, ScatterChart, AxisPointerComponent, DataZoomComponent, GridComponent, LegendComponent, TitleComponent, TooltipComponent, LabelLayout, SVGRenderer]);

export type { ECharts, EChartsCoreOption };

export function createChart(el: HTMLElement): ECharts {
  return init(el, undefined, { renderer: 'svg' });
}
