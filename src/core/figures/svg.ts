// A figure option drawn to an SVG string without a DOM: ECharts' server-side rendering (the SVG
// renderer with `ssr: true`). For Node (the CLI's --plot); the workbench draws the same options
// with echarts.init(element) instead and never needs this module.

import type * as ECharts from 'echarts';
// The package's prebuilt single-file ESM build: the same library as 'echarts', loaded in a tenth
// of the time of its ~700 separate modules (about 0.1 s against 0.8 s), which a CLI run pays once.
// @ts-expect-error the bundle ships no declarations of its own; its API is the 'echarts' types
import * as bundle from 'echarts/dist/echarts.esm.min';
import { FIGURE_SIZE, type FigureOption } from './theme.js';

const echarts = bundle as unknown as typeof ECharts;

export interface SvgSize {
  width: number;
  height: number;
}

/** The figure as a standalone SVG document (UTF-8 text), `width` × `height` px. */
export function renderSvg(option: FigureOption, size: SvgSize = FIGURE_SIZE): string {
  for (const key of ['width', 'height'] as const) {
    const v = size[key];
    if (!(Number.isFinite(v) && v >= 16 && v <= 20000)) throw new RangeError(`renderSvg: ${key} must be a number of pixels from 16 to 20000, found ${v}`);
  }
  const chart = echarts.init(null, null, { renderer: 'svg', ssr: true, width: size.width, height: size.height });
  // disposed even when setOption throws: an undisposed chart keeps a timer alive and Node from exiting
  try {
    chart.setOption(option);
    return chart.renderToSVGString();
  } finally {
    chart.dispose();
  }
}
