// Figure 4: Monte Carlo survival of `pronk robustness` — the fraction of rollouts still running
// after each stride, with its Wilson 95 % interval as a band; rollouts, terrain and seed in the
// subtitle.
//
// Series ids: survival-band (custom; data [stride, lo, hi] = survival_by_stride[].wilson95) and
// survival (line; data [stride, survival]). Strides are the result's 0-based indices.

import type { CustomSeriesOption, CustomSeriesRenderItemAPI, CustomSeriesRenderItemParams, LineSeriesOption } from 'echarts';
import type { RobustnessResult } from '../analysis/robustness.js';
import type { YAXisComponentOption } from 'echarts';
import { PALETTE, baseOption, frameOf, header, niceStep, num, tickText, tooltip, valueXAxis, valueYAxis, type FigureOption, type Frame } from './theme.js';

export interface SurvivalFigureOptions {
  title?: string;
  frame?: Frame;
}

/**
 * The survival axis, zoomed to the data: from a round value just below the lowest Wilson bound to
 * 100 %, ticks in per cent with the decimals their step needs (97.9 % and 100 % are a visible
 * distance apart, and the band has height).
 */
export function survivalAxis(name: string, lowest: number, extra: Record<string, unknown> = {}): YAXisComponentOption {
  const low = Number.isFinite(lowest) ? Math.min(1, Math.max(0, lowest)) : 0;
  const span = Math.max(1 - low, 0.002);
  const step = niceStep(span, 5);
  const min = Math.max(0, Math.floor((1 - span * 1.08) / step - 1e-9) * step);
  const decimals = Math.max(0, -Math.floor(Math.log10(step * 100) + 1e-9));
  return valueYAxis(name, {
    min: Number(min.toFixed(12)),
    max: 1,
    interval: step,
    axisLabel: { formatter: (v: number) => `${tickText(v * 100, decimals)} %` },
    ...extra,
  });
}

/**
 * An interval band as an ECharts custom series: one quadrilateral between each pair of
 * neighbouring points [x, lo, hi] (a vertical bar when there is only one point).
 */
export function bandSeries(id: string, name: string, data: [number, number, number][], color: string, extra: Partial<CustomSeriesOption> = {}): CustomSeriesOption {
  return {
    id,
    name,
    type: 'custom',
    data,
    encode: { x: 0, y: [1, 2] },
    itemStyle: { color },
    renderItem: (params: CustomSeriesRenderItemParams, api: CustomSeriesRenderItemAPI) => {
      const i = params.dataIndex;
      const style = { fill: color, opacity: 0.28 };
      if (data.length === 1) {
        const [x, lo, hi] = data[0];
        const a = api.coord([x, lo]);
        const b = api.coord([x, hi]);
        return { type: 'rect', shape: { x: a[0] - 4, y: b[1], width: 8, height: a[1] - b[1] }, style };
      }
      if (i + 1 >= data.length) return null;
      const [x0, lo0, hi0] = data[i];
      const [x1, lo1, hi1] = data[i + 1];
      return { type: 'polygon', shape: { points: [api.coord([x0, lo0]), api.coord([x1, lo1]), api.coord([x1, hi1]), api.coord([x0, hi0])] }, style };
    },
    z: 1,
    ...extra,
  } as CustomSeriesOption;
}

export function survivalBand(result: RobustnessResult): [number, number, number][] {
  return result.survival_by_stride.map((s) => [s.stride, s.wilson95[0], s.wilson95[1]]);
}

export function terrainText(r: RobustnessResult): string {
  const kind = r.terrain.kind === 'random_walk' ? 'random walk' : 'random heights';
  return `${kind}, σ = ${num(r.terrain.sigma_m, 4)} m, seed ${r.terrain.seed}`;
}

const pct = (x: number) => `${num(100 * x, 3)} %`;

export function survivalFigure(result: RobustnessResult, options: SurvivalFigureOptions = {}): FigureOption {
  const line: LineSeriesOption = {
    id: 'survival',
    name: 'survival after the stride',
    type: 'line',
    data: result.survival_by_stride.map((s) => [s.stride, s.survival]),
    symbol: 'circle',
    symbolSize: result.survival_by_stride.length <= 60 ? 6 : 0,
    lineStyle: { width: 2.5, color: PALETTE.deepBlue },
    itemStyle: { color: PALETTE.deepBlue },
    z: 3,
    tooltip: {
      formatter: (p: unknown) => {
        const s = result.survival_by_stride[(p as { dataIndex: number }).dataIndex];
        return `after stride ${s.stride}: ${s.running} of ${result.rollouts} running<br/>survival ${pct(s.survival)} (Wilson 95 %: ${pct(s.wilson95[0])} to ${pct(s.wilson95[1])})`;
      },
    },
  };
  const subtitle =
    `${result.rollouts} rollouts × ${result.strides} strides from apex ${num(result.start.apex_height_m, 4)} m at ${num(result.start.forward_speed_m_per_s, 4)} m/s; ${terrainText(result)}\n` +
    `survived ${result.survived} = ${pct(result.survival)} (Wilson 95 %: ${pct(result.wilson95[0])} to ${pct(result.wilson95[1])}); ` +
    `${num(result.mean_strides_completed, 4)} strides completed on average`;
  const last = Math.max(0, result.strides - 1);
  const frame = frameOf(options.frame);
  const band = bandSeries('survival-band', 'Wilson 95 % interval', survivalBand(result), PALETTE.sky);
  const head = header(frame, options.title ?? 'Monte Carlo survival on random terrain', subtitle, [String(band.name), String(line.name)]);
  const lowest = Math.min(...result.survival_by_stride.map((s) => s.wilson95[0]), result.wilson95[0]);
  return {
    ...baseOption(`Survival after each stride over ${result.rollouts} rollouts: ${pct(result.survival)} survive all ${result.strides} strides.`),
    ...(head.title ? { title: head.title } : {}),
    legend: head.legend,
    tooltip: tooltip(),
    grid: { left: 96, right: 48, top: head.top, bottom: 72 },
    xAxis: valueXAxis('stride (0-based index; survival counted after it)', { min: 0, max: last === 0 ? 1 : last, minInterval: 1 }),
    yAxis: survivalAxis('survival (rollouts still running)', lowest),
    series: [band, line],
  };
}
