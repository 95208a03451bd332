// The lateral model's stability regions (`pronk scan` on a "lateral" scenario): a map over the two
// scanned parameters, each cell classed by its most stable periodic gait at the cell's own start
// energy: stable (the largest reduced eigenvalue modulus below 1; shade: that modulus), neutral
// (modulus 1: the heading-to-body and angular-velocity errors neither grow nor die, as with the
// force through the centre of mass), unstable only (slashed) or no gait. The stability figure's
// colours; neutral in the marginal end of the stable ramp, dotted.
//
// Series ids: stable ([x, y, largest modulus, cell index]), neutral, unstable ([x, y, gaits,
// index]), none ([x, y, 0, index]).

import type { SeriesOption, VisualMapComponentOption } from 'echarts';
import type { LateralScanCell, LateralScanClass, LateralScanResult } from '../analysis/lateral-scan.js';
import { cellAxis, cellSeries, constantVisualMap, stableRampVisualMap, type CellDatum } from './cells.js';
import { parameterTitle } from './labels.js';
import { PALETTE, STABILITY_COLORS, STATE_COLORS, baseOption, frameOf, header, num, tooltip, type FigureOption, type Frame } from './theme.js';

export interface LateralScanFigureOptions {
  title?: string;
  frame?: Frame;
}

/** The neutral cells' colour: the marginal end of the stable ramp. */
const NEUTRAL = STABILITY_COLORS.stableRamp[1];

function cellText(result: LateralScanResult, cell: LateralScanCell): string {
  const where = `${parameterTitle(result.x.path)} = ${num(cell.x, 6)}<br/>${parameterTitle(result.y.path)} = ${num(cell.y, 6)}`;
  if (cell.class === 'none') return `${where}<br/>no periodic gait at this energy`;
  const gait = `${num(cell.speed_m_per_s as number, 4)} m/s, heading to the body ${num(cell.heading_to_body_deg as number, 4)} deg`;
  return `${where}<br/>${cell.class}: ${cell.gaits} gait${cell.gaits === 1 ? '' : 's'}; the most stable at ${gait}, largest reduced |eigenvalue| ${num(cell.largest_modulus as number, 4)}`;
}

export function lateralScanFigure(result: LateralScanResult, options: LateralScanFigureOptions = {}): FigureOption {
  const frame = frameOf(options.frame);
  const xs = result.x.values;
  const ys = result.y.values;
  const data: Record<LateralScanClass, CellDatum[]> = { stable: [], neutral: [], unstable: [], none: [] };
  result.cells.forEach((cell, index) => {
    const value = cell.class === 'stable' ? (cell.largest_modulus as number) : cell.class === 'unstable' ? cell.gaits : 0;
    data[cell.class].push([cell.x, cell.y, value, index]);
  });
  const tip = (index: number) => cellText(result, result.cells[index]);
  const series: SeriesOption[] = [
    cellSeries({ id: 'stable', name: 'stable (largest reduced |eigenvalue| < 1)', data: data.stable, xs, ys, color: STATE_COLORS.stable, tooltip: tip }),
    cellSeries({ id: 'neutral', name: 'neutral (|eigenvalue| 1; dotted)', data: data.neutral, xs, ys, color: NEUTRAL, glyph: 'dot', glyphColor: PALETTE.ink, tooltip: tip }),
    cellSeries({ id: 'unstable', name: 'unstable gaits only (slashed)', data: data.unstable, xs, ys, color: STATE_COLORS.unstable, glyph: 'slash', glyphColor: PALETTE.ink, tooltip: tip }),
    cellSeries({ id: 'none', name: 'no periodic gait', data: data.none, xs, ys, color: STATE_COLORS.none, outline: '#cfcac0', tooltip: tip }),
  ];
  const visualMap: VisualMapComponentOption[] = [
    stableRampVisualMap(0, frame, ['|eigenvalue| 1 (marginal)', '|eigenvalue| 0']),
    constantVisualMap(1, NEUTRAL),
    constantVisualMap(2, STABILITY_COLORS.unstable),
    constantVisualMap(3, STABILITY_COLORS.none),
  ];
  const c = result.counts;
  const total = result.cells.length;
  const subtitle =
    `${c.stable} stable, ${c.neutral} neutral, ${c.unstable} unstable only, ${c.none} without a gait, of ${total} cells; each cell's gaits at its own start energy\n` +
    `class of the most stable gait by its reduced eigenvalues (heading to the body, angular velocity); x: ${result.x.path}, y: ${result.y.path}`;
  const head = header(frame, options.title ?? 'Stability regions of the lateral gait', subtitle, series.map((s) => String(s.name)));
  return {
    ...baseOption(`Stability regions of the lateral gait over ${parameterTitle(result.x.path)} and ${parameterTitle(result.y.path)}: ${c.stable} of ${total} cells stable.`),
    ...(head.title ? { title: head.title } : {}),
    legend: head.legend,
    tooltip: tooltip(),
    grid: { left: 96, right: 170, top: head.top, bottom: 72 },
    xAxis: cellAxis('x', parameterTitle(result.x.path), xs) as never,
    yAxis: cellAxis('y', parameterTitle(result.y.path), ys, { nameGap: 64 }) as never,
    visualMap,
    series,
  };
}
