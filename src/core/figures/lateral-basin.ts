// The lateral model's basin (`pronk basin` on a "lateral" scenario): a map over the errors of the
// angular velocity (x, deg/s) and of the heading to the body axis (y, deg) from the gait's at the
// left touchdown, at the gait's energy; cells coloured by outcome with the basin figure's states
// (converged, wandering dotted, fell crossed), and `no_speed` (the gait's energy leaves no
// translation at that angular velocity) in the "none" colour, outlined.
//
// Series ids: converged, wandering, fell, no_speed (data [x, y, 0, cell index]); the gait itself is
// the cell at (0, 0) when the grid holds it, marked with the `current` series.

import type { SeriesOption, VisualMapComponentOption } from 'echarts';
import type { LateralBasinCell, LateralBasinOutcome, LateralBasinResult } from '../analysis/lateral-basin.js';
import { cellAxis, cellSeries, constantVisualMap, currentPointSeries, type CellDatum } from './cells.js';
import { PALETTE, STATE_COLORS, baseOption, frameOf, header, num, tooltip, type FigureOption, type Frame } from './theme.js';

export interface LateralBasinFigureOptions {
  title?: string;
  frame?: Frame;
}

/** Grid position of cell `index`: [x index (angular-velocity error), y index (heading error)]. */
export function lateralBasinCellPosition(result: LateralBasinResult, index: number): [number, number] {
  const nr = result.rates_deg_per_s.length;
  return [index % nr, Math.floor(index / nr)];
}

function cellText(cell: LateralBasinCell, strides: number): string {
  const start = `heading error ${num(cell.heading_error_deg, 4)} deg, angular-velocity error ${num(cell.rate_error_deg_per_s, 4)} deg/s`;
  if (cell.outcome === 'no_speed') return `${start}<br/>no speed at the gait's energy`;
  if (cell.outcome === 'fell') return `${start}<br/>fell (${String(cell.reason).replaceAll('_', ' ')})`;
  const turn = cell.turn_deg === null ? '' : `<br/>heading turned by ${num(cell.turn_deg, 4)} deg`;
  return `${start}<br/>${cell.outcome} after ${strides} strides${turn}`;
}

export function lateralBasinFigure(result: LateralBasinResult, options: LateralBasinFigureOptions = {}): FigureOption {
  const frame = frameOf(options.frame);
  const xs = result.rates_deg_per_s;
  const ys = result.headings_deg;
  const data: Record<LateralBasinOutcome, CellDatum[]> = { converged: [], wandering: [], fell: [], no_speed: [] };
  result.cells.forEach((cell, index) => {
    const [ix, iy] = lateralBasinCellPosition(result, index);
    data[cell.outcome].push([xs[ix], ys[iy], 0, index]);
  });
  const tip = (index: number) => cellText(result.cells[index], result.strides);
  const series: SeriesOption[] = [
    cellSeries({ id: 'converged', name: 'converged (back on the gait)', data: data.converged, xs, ys, color: STATE_COLORS.converged, tooltip: tip }),
    cellSeries({ id: 'wandering', name: 'wandering (survived, not back; dotted)', data: data.wandering, xs, ys, color: STATE_COLORS.wandering, glyph: 'dot', glyphColor: PALETTE.ink, tooltip: tip }),
    cellSeries({ id: 'fell', name: 'fell (crossed)', data: data.fell, xs, ys, color: STATE_COLORS.fell, glyph: 'cross', glyphColor: 'rgba(255,255,255,0.85)', tooltip: tip }),
    cellSeries({ id: 'no_speed', name: "no speed at the gait's energy", data: data.no_speed, xs, ys, color: STATE_COLORS.none, outline: PALETTE.muted, tooltip: tip }),
  ];
  const inGrid = (values: readonly number[]) => values.length > 0 && values[0] <= 0 && values[values.length - 1] >= 0;
  if (inGrid(xs) && inGrid(ys)) {
    const gait = currentPointSeries(0, 0, 'the gait');
    series.push({ ...gait, label: { ...gait.label, formatter: 'gait' } });
  }
  const colours = [STATE_COLORS.converged, STATE_COLORS.wandering, STATE_COLORS.fell, STATE_COLORS.none];
  const visualMap: VisualMapComponentOption[] = colours.map((colour, seriesIndex) => constantVisualMap(seriesIndex, colour));
  const c = result.counts;
  const cells = result.cells.length;
  const g = result.gait;
  const heading = options.title ?? `Basin of the lateral gait: attracted fraction ${num(result.attracted_fraction, 3)}`;
  const subtitle =
    `${c.converged} converged, ${c.wandering} wandering, ${c.fell} fell, ${c.no_speed} without speed of ${cells} starts, ` +
    `${ys.length} heading errors × ${xs.length} angular-velocity errors at the gait's energy ${num(g.energy_J, 5)} J\n` +
    `gait: ${num(g.speed_m_per_s, 4)} m/s, heading to the body ${num(g.heading_to_body_deg, 4)} deg, ${num(g.angular_velocity_deg_per_s, 4)} deg/s (${g.stability}); ` +
    `converged: ${result.strides} strides and back within ${num(result.tolerance, 3)} deg and deg/s`;
  const head = header(frame, heading, subtitle, series.filter((s) => s.id !== 'current').map((s) => String(s.name)));
  return {
    ...baseOption(`Basin of the lateral gait: ${c.converged} of ${cells} starts converged (fraction ${num(result.attracted_fraction, 3)}).`),
    ...(head.title ? { title: head.title } : {}),
    legend: head.legend,
    tooltip: tooltip(),
    visualMap,
    series,
    grid: { left: 96, right: 48, top: head.top, bottom: 72 },
    xAxis: cellAxis('x', 'angular-velocity error at the left touchdown (deg/s)', xs) as never,
    yAxis: cellAxis('y', 'heading-to-body error at the left touchdown (deg)', ys, { nameGap: 64 }) as never,
  };
}
