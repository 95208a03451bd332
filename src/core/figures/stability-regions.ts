// Figure 2: stability regions of `pronk scan` — a heat map over the two scanned parameters, each
// cell none / unstable / stable, the stable cells shaded by |slope| of their stable fixed point
// (a continuous visual map: dark = strongly stable, light = marginal).
//
// Series ids: stable (data [ix, iy, |slope|]), unstable ([ix, iy, fixed points]), none
// ([ix, iy, 0]); x and y are category axes over the grid values, named by the parameter paths.

import type { HeatmapSeriesOption, VisualMapComponentOption } from 'echarts';
import type { ScanCell, ScanResult } from '../analysis/scan.js';
import { STABILITY_COLORS, PALETTE, TYPE, baseOption, categoryXAxis, categoryYAxis, gridLabels, legend, num, title, tooltip, type FigureOption } from './theme.js';

export interface StabilityRegionsFigureOptions {
  title?: string;
}

function cellText(result: ScanResult, cell: ScanCell): string {
  const where = `${result.x.path} = ${num(cell.x, 6)}<br/>${result.y.path} = ${num(cell.y, 6)}`;
  if (cell.class === 'stable') {
    return `${where}<br/>stable fixed point at ${num(cell.stable_apex_height_m, 6)} m, slope ${num(cell.stable_slope, 4)}`;
  }
  if (cell.class === 'unstable') {
    return `${where}<br/>unstable only: ${cell.fixed_points.map((f) => `${num(f.apex_height_m, 5)} m (slope ${num(f.slope, 3)})`).join(', ')}`;
  }
  return `${where}<br/>no fixed point${cell.domain_empty ? ' (no stride survives at this energy)' : cell.identity_map ? ' (P(y) = y: neutral everywhere)' : ''}`;
}

export function stabilityRegionsFigure(result: ScanResult, options: StabilityRegionsFigureOptions = {}): FigureOption {
  const byClass = (c: ScanCell['class']) => result.cells.filter((cell) => cell.class === c);
  const cellAt = new Map(result.cells.map((cell) => [`${cell.ix},${cell.iy}`, cell]));
  const formatter = (p: unknown) => {
    const value = (p as { value: number[] }).value;
    const cell = cellAt.get(`${value[0]},${value[1]}`);
    return cell ? cellText(result, cell) : '';
  };
  const heat = (id: string, name: string, data: number[][]): HeatmapSeriesOption => ({
    id,
    name,
    type: 'heatmap',
    data,
    itemStyle: { borderColor: PALETTE.paper, borderWidth: result.cells.length <= 2500 ? 1 : 0 },
    emphasis: { itemStyle: { borderColor: PALETTE.ink, borderWidth: 2 } },
    tooltip: { formatter },
  });
  const stable = byClass('stable');
  const series: HeatmapSeriesOption[] = [
    { ...heat('stable', 'stable (|slope| < 1)', stable.map((c) => [c.ix, c.iy, Math.abs(c.stable_slope as number)])), itemStyle: { color: STABILITY_COLORS.stableRamp[0], borderColor: PALETTE.paper, borderWidth: result.cells.length <= 2500 ? 1 : 0 } },
    { ...heat('unstable', 'unstable fixed points only', byClass('unstable').map((c) => [c.ix, c.iy, c.fixed_points.length])), itemStyle: { color: STABILITY_COLORS.unstable, borderColor: PALETTE.paper, borderWidth: result.cells.length <= 2500 ? 1 : 0 } },
    { ...heat('none', 'no fixed point', byClass('none').map((c) => [c.ix, c.iy, 0])), itemStyle: { color: STABILITY_COLORS.none, borderColor: PALETTE.grid, borderWidth: result.cells.length <= 2500 ? 1 : 0 } },
  ];
  // ECharts colours heat-map cells only through a visual map: one shown for the stable ramp, and
  // one constant, hidden map for each of the other two classes.
  const visualMap: VisualMapComponentOption[] = [
    {
      type: 'continuous',
      seriesIndex: 0,
      dimension: 2,
      min: 0,
      max: 1,
      inRange: { color: [...STABILITY_COLORS.stableRamp] },
      text: ['|slope| 1 (marginal)', '|slope| 0'],
      textStyle: { fontSize: TYPE.label, color: PALETTE.ink },
      calculable: true,
      precision: 2,
      orient: 'vertical',
      right: 24,
      top: 'middle',
      itemHeight: 240,
    },
    { type: 'piecewise', show: false, seriesIndex: 1, dimension: 2, pieces: [{ min: -Infinity, max: Infinity }], inRange: { color: [STABILITY_COLORS.unstable] } },
    { type: 'piecewise', show: false, seriesIndex: 2, dimension: 2, pieces: [{ min: -Infinity, max: Infinity }], inRange: { color: [STABILITY_COLORS.none] } },
  ];
  const total = result.cells.length;
  const subtitle =
    `${result.counts.stable} stable, ${result.counts.unstable} unstable only, ${result.counts.none} without a fixed point, of ${total} cells; ` +
    `return map at ${num(result.energy_J, 5)} J on flat ground\n` +
    `stable: the 1-D apex map has a fixed point with |P'(y*)| < 1 (shade: |slope| of the lowest stable one)`;
  return {
    ...baseOption(`Stability regions over ${result.x.path} and ${result.y.path}: ${result.counts.stable} of ${total} cells stable.`),
    title: title(options.title ?? 'Stability regions', subtitle),
    legend: legend({ top: 96 }),
    tooltip: tooltip(),
    grid: { left: 110, right: 190, top: 140, bottom: 80 },
    xAxis: categoryXAxis(result.x.path, gridLabels(result.x.values)),
    yAxis: categoryYAxis(result.y.path, gridLabels(result.y.values), { nameGap: 80 }),
    visualMap,
    series,
  };
}
