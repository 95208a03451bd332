// Figure 3: the basin of attraction of `pronk basin` — a heat map over start forward speed (x)
// and start apex height (y) in grid mode, or a strip over apex height at the scenario's energy
// in energy mode; cells coloured by outcome, fell cells shaded by the stride they fell at.
//
// Series ids: converged, wandering (data [i, j, 0]) and fell ([i, j, failed stride]); in grid
// mode i is the speed index and j the height index, in energy mode i is the height index, j = 0.

import type { HeatmapSeriesOption, VisualMapComponentOption } from 'echarts';
import type { BasinCell, BasinResult } from '../analysis/basin.js';
import { OUTCOME_COLORS, PALETTE, TYPE, baseOption, categoryXAxis, categoryYAxis, gridLabels, legend, num, title, tooltip, type FigureOption } from './theme.js';

export interface BasinFigureOptions {
  title?: string;
}

/** Grid position of cell `index`: [x index, y index] as plotted. */
export function basinCellPosition(result: BasinResult, index: number): [number, number] {
  if (result.mode === 'energy') return [index, 0];
  const nv = result.speeds_m_per_s.length;
  return [index % nv, Math.floor(index / nv)];
}

function cellText(cell: BasinCell): string {
  const start = `start apex ${num(cell.apex_height_m, 5)} m at ${cell.forward_speed_m_per_s === null ? 'no speed (energy too low)' : `${num(cell.forward_speed_m_per_s, 4)} m/s`}`;
  if (cell.outcome === 'fell') return `${start}<br/>fell at stride ${cell.failed_stride} (${cell.reason})`;
  const last = cell.last_apex ? `<br/>last apex ${num(cell.last_apex.height_m, 5)} m, ${num(cell.last_apex.forward_speed_m_per_s, 4)} m/s` : '';
  return `${start}<br/>${cell.outcome} after ${cell.strides_completed} strides${last}`;
}

export function basinFigure(result: BasinResult, options: BasinFigureOptions = {}): FigureOption {
  const grid = result.mode === 'grid';
  const positioned = result.cells.map((cell, index) => ({ cell, at: basinCellPosition(result, index) }));
  const cellAt = new Map(positioned.map(({ cell, at }) => [`${at[0]},${at[1]}`, cell]));
  const formatter = (p: unknown) => {
    const value = (p as { value: number[] }).value;
    const cell = cellAt.get(`${value[0]},${value[1]}`);
    return cell ? cellText(cell) : '';
  };
  const border = { borderColor: PALETTE.paper, borderWidth: result.cells.length <= 2500 ? 1 : 0 };
  const heat = (id: BasinCell['outcome'], name: string, color: string, value: (cell: BasinCell) => number): HeatmapSeriesOption => ({
    id,
    name,
    type: 'heatmap',
    data: positioned.filter(({ cell }) => cell.outcome === id).map(({ cell, at }) => [at[0], at[1], value(cell)]),
    itemStyle: { color, ...border },
    emphasis: { itemStyle: { borderColor: PALETTE.ink, borderWidth: 2 } },
    tooltip: { formatter },
  });
  const lastStride = Math.max(1, result.strides - 1);
  const series: HeatmapSeriesOption[] = [
    heat('converged', 'converged (settled on a fixed point)', OUTCOME_COLORS.converged, () => 0),
    heat('wandering', 'wandering (survived, not settled)', OUTCOME_COLORS.wandering, () => 0),
    heat('fell', 'fell (shade: the stride it fell at)', OUTCOME_COLORS.fellRamp[1], (cell) => cell.failed_stride as number),
  ];
  const visualMap: VisualMapComponentOption[] = [
    { type: 'piecewise', show: false, seriesIndex: 0, dimension: 2, pieces: [{ min: -Infinity, max: Infinity }], inRange: { color: [OUTCOME_COLORS.converged] } },
    { type: 'piecewise', show: false, seriesIndex: 1, dimension: 2, pieces: [{ min: -Infinity, max: Infinity }], inRange: { color: [OUTCOME_COLORS.wandering] } },
    {
      type: 'continuous',
      seriesIndex: 2,
      dimension: 2,
      min: 0,
      max: lastStride,
      inRange: { color: [...OUTCOME_COLORS.fellRamp] },
      text: [`fell at stride ${lastStride}`, 'fell at stride 0'],
      textStyle: { fontSize: TYPE.label, color: PALETTE.ink },
      calculable: true,
      precision: 0,
      orient: 'vertical',
      right: 24,
      top: 'middle',
      itemHeight: 240,
    },
  ];
  const c = result.counts;
  const heading = options.title ?? `Basin of attraction: attracted fraction ${num(result.attracted_fraction, 3)}`;
  const extent = grid
    ? `${c.cells} start apexes, ${result.heights_m.length} heights × ${result.speeds_m_per_s.length} speeds`
    : `${c.cells} start apex heights at the start energy ${num(result.energy_J, 5)} J (speed from energy)`;
  const subtitle =
    `${c.converged} converged, ${c.wandering} wandering, ${c.fell} fell of ${extent}; flat ground\n` +
    `converged: ${result.strides} strides completed and the last two apexes within ${num(result.tolerance.height_m, 3)} m and ${num(result.tolerance.forward_speed_m_per_s, 3)} m/s`;
  const common = {
    ...baseOption(`Basin of attraction: ${c.converged} of ${c.cells} start apexes converged (fraction ${num(result.attracted_fraction, 3)}).`),
    title: title(heading, subtitle),
    legend: legend({ top: 96 }),
    tooltip: tooltip(),
    visualMap,
    series,
  };
  if (grid) {
    return {
      ...common,
      grid: { left: 110, right: 190, top: 140, bottom: 80 },
      xAxis: categoryXAxis('start forward speed (m/s)', gridLabels(result.speeds_m_per_s)),
      yAxis: categoryYAxis('start apex height (m)', gridLabels(result.heights_m), { nameGap: 72 }),
    };
  }
  return {
    ...common,
    grid: { left: 110, right: 190, top: 200, height: 200 },
    xAxis: categoryXAxis('start apex height (m)', gridLabels(result.heights_m)),
    yAxis: categoryYAxis('', [`E = ${num(result.energy_J, 5)} J`], { axisLabel: { fontSize: TYPE.axisLabel, color: PALETTE.ink, rotate: 90 } }),
  };
}
