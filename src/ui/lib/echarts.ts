// The part of Apache ECharts the figures use (core/figures/: line, scatter, bar and custom series;
// grid with value, log and category axes, title, legend, tooltip and axis pointer, visual maps,
// mark lines and areas, the aria description), with the canvas renderer for the page and the SVG
// renderer for the downloads. The whole library registers some twenty chart types and thirty
// components more, and evaluating it was one of the longest tasks of the page's first load.
// A figure that starts using another series type or component adds it here.

import { BarChart, CustomChart, LineChart, ScatterChart } from 'echarts/charts';
import {
  AriaComponent,
  AxisPointerComponent,
  GridComponent,
  LegendComponent,
  MarkAreaComponent,
  MarkLineComponent,
  TitleComponent,
  TooltipComponent,
  VisualMapComponent,
} from 'echarts/components';
import * as echarts from 'echarts/core';
import { LabelLayout } from 'echarts/features';
import { CanvasRenderer, SVGRenderer } from 'echarts/renderers';

echarts.use([
  LineChart,
  ScatterChart,
  BarChart,
  CustomChart,
  GridComponent,
  TitleComponent,
  LegendComponent,
  TooltipComponent,
  AxisPointerComponent,
  VisualMapComponent,
  MarkLineComponent,
  MarkAreaComponent,
  AriaComponent,
  LabelLayout,
  CanvasRenderer,
  SVGRenderer,
]);

export const init = echarts.init;
