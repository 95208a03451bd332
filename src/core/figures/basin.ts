// Figure 3: the basin of attraction of `pronk basin` — a map over start forward speed (x) and start
// apex height (y) in grid mode, or a strip over apex height at the scenario's energy in energy
// mode; cells coloured by outcome (the states' colours), fell cells shaded by the stride they fell
// at (darkest at stride 0, never the paper's colour) and crossed, wandering cells dotted.
//
// Series ids: converged, wandering (data [x, y, 0, cell index]) and fell ([x, y, failed stride,
// index]), and `current` (the scenario's start apex) when given; in grid mode x is the start speed
// and y the start height, in energy mode x is the height and y is 0.

import type { SeriesOption, VisualMapComponentOption } from 'echarts';
import type { BasinCell, BasinResult } from '../analysis/basin.js';
import { cellAxis, cellSeries, constantVisualMap, currentPointSeries, type CellDatum } from './cells.js';
import { parameterTitle } from './labels.js';
import { OUTCOME_COLORS, PALETTE, STATE_COLORS, TYPE, baseOption, frameOf, header, num, tooltip, type FigureOption, type Frame } from './theme.js';

export interface BasinFigureOptions {
  title?: string;
  frame?: Frame;
  /** The scenario's start apex, marked on the map (grid mode: height and speed; energy mode: height). */
  current?: { apex_height_m: number; forward_speed_m_per_s?: number };
}

/** Grid position of cell `index`: [x index, y index] as plotted. */
export function basinCellPosition(result: BasinResult, index: number): [number, number] {
  if (result.mode === 'energy') return [index, 0];
  const nv = result.speeds_m_per_s.length;
  return [index % nv, Math.floor(index / nv)];
}

function cellText(cell: BasinCell): string {
  const start = `start apex ${num(cell.apex_height_m, 5)} m at ${cell.forward_speed_m_per_s === null ? 'no speed (energy too low)' : `${num(cell.forward_speed_m_per_s, 4)} m/s`}`;
  if (cell.outcome === 'fell') return `${start}<br/>fell at stride ${cell.failed_stride} (${String(cell.reason).replaceAll('_', ' ')})`;
  const last = cell.last_apex ? `<br/>last apex ${num(cell.last_apex.height_m, 5)} m, ${num(cell.last_apex.forward_speed_m_per_s, 4)} m/s` : '';
  return `${start}<br/>${cell.outcome} after ${cell.strides_completed} strides${last}`;
}

export function basinFigure(result: BasinResult, options: BasinFigureOptions = {}): FigureOption {
  const frame = frameOf(options.frame);
  const grid = result.mode === 'grid';
  const xs = grid ? result.speeds_m_per_s : result.heights_m;
  const ys = grid ? result.heights_m : [0];
  // each outcome's cells [x, y, value, cell index] in cell order, in one pass (a 121 x 121 grid's
  // three filtering passes with their per-cell arrays cost the page's result frame about 10 ms)
  const data: Record<BasinCell['outcome'], CellDatum[]> = { converged: [], wandering: [], fell: [] };
  result.cells.forEach((cell, index) => {
    const [ix, iy] = basinCellPosition(result, index);
    data[cell.outcome].push([xs[ix], ys[iy], cell.outcome === 'fell' ? (cell.failed_stride as number) : 0, index]);
  });
  const tip = (index: number) => cellText(result.cells[index]);
  const lastStride = Math.max(1, result.strides - 1);
  const series: SeriesOption[] = [
    cellSeries({ id: 'converged', name: 'converged (settled on a fixed point)', data: data.converged, xs, ys, color: STATE_COLORS.converged, tooltip: tip }),
    cellSeries({ id: 'wandering', name: 'wandering (survived, not settled; dotted)', data: data.wandering, xs, ys, color: STATE_COLORS.wandering, glyph: 'dot', glyphColor: PALETTE.ink, tooltip: tip }),
    cellSeries({
      id: 'fell',
      name: 'fell (crossed; shade: the stride it fell at)',
      data: data.fell,
      xs,
      ys,
      color: STATE_COLORS.fell,
      glyph: 'cross',
      glyphColor: (stride) => (stride < lastStride * 0.55 ? 'rgba(255,255,255,0.85)' : 'rgba(34,38,46,0.7)'),
      tooltip: tip,
    }),
  ];
  const current = options.current;
  if (current && Number.isFinite(current.apex_height_m)) {
    if (!grid) series.push(currentPointSeries(current.apex_height_m, 0));
    else if (current.forward_speed_m_per_s !== undefined && Number.isFinite(current.forward_speed_m_per_s)) series.push(currentPointSeries(current.forward_speed_m_per_s, current.apex_height_m));
  }
  const visualMap: VisualMapComponentOption[] = [
    constantVisualMap(0, OUTCOME_COLORS.converged),
    constantVisualMap(1, OUTCOME_COLORS.wandering),
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
      right: 16,
      top: 'middle',
      itemHeight: Math.max(80, Math.min(240, frame.height - 260)),
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
  const head = header(frame, heading, subtitle, series.map((s) => String(s.name)));
  const common = {
    ...baseOption(`Basin of attraction: ${c.converged} of ${c.cells} start apexes converged (fraction ${num(result.attracted_fraction, 3)}).`),
    ...(head.title ? { title: head.title } : {}),
    legend: head.legend,
    tooltip: tooltip(),
    visualMap,
    series,
  };
  if (grid) {
    return {
      ...common,
      grid: { left: 96, right: 170, top: head.top, bottom: 72 },
      xAxis: cellAxis('x', parameterTitle('start.forward_speed_m_per_s'), xs) as never,
      yAxis: cellAxis('y', parameterTitle('start.apex_height_m'), ys, { nameGap: 64 }) as never,
    };
  }
  const stripHeight = Math.max(60, Math.min(200, frame.height - head.top - 120));
  return {
    ...common,
    grid: { left: 96, right: 170, top: head.top, height: stripHeight },
    xAxis: cellAxis('x', parameterTitle('start.apex_height_m'), xs) as never,
    yAxis: cellAxis('y', `E = ${num(result.energy_J, 5)} J`, ys, { axisLabel: { show: false }, axisTick: { show: false }, nameGap: 16 }) as never,
  };
}
