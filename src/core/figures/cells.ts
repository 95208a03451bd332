// Grids of cells (stability regions, basin) drawn as rectangles on value axes: the axes read in the
// parameters' own units with round ticks (0.45, 0.50 — never a grid value such as 0.49171), each
// cell spans half-way to its neighbours, and a glyph in the cell says its class where colour
// alone would (a cross for fell, a dot for wandering, a slash for unstable only).
//
// A cell's data item is [x, y, value, cell index]: x and y the grid values (so tooltips and the
// current-point marker share the axes' units), value what a visual map colours by, and the index
// into the result's cells (what a click in the workbench loads).

import type { CustomSeriesOption, CustomSeriesRenderItemAPI, CustomSeriesRenderItemParams, ScatterSeriesOption, VisualMapComponentOption, XAXisComponentOption, YAXisComponentOption } from 'echarts';
import { PALETTE, STABILITY_COLORS, TYPE, niceTicks, tickText, valueXAxis, valueYAxis, type Frame } from './theme.js';

export type CellDatum = [x: number, y: number, value: number, index: number];

export type CellGlyph = 'cross' | 'dot' | 'slash' | null;

/** Cell edges along one axis: half-way between neighbouring values, the ends as far out as their neighbours' half-gap. */
export function cellEdges(values: readonly number[]): number[] {
  if (values.length === 0) return [0, 1];
  if (values.length === 1) {
    const half = Math.abs(values[0]) * 0.05 || 0.5;
    return [values[0] - half, values[0] + half];
  }
  const edges = [values[0] - (values[1] - values[0]) / 2];
  for (let i = 1; i < values.length; i++) edges.push((values[i - 1] + values[i]) / 2);
  const n = values.length;
  edges.push(values[n - 1] + (values[n - 1] - values[n - 2]) / 2);
  return edges;
}

/** The index of the grid value nearest to v (values sorted ascending). */
function nearest(values: readonly number[], v: number): number {
  let best = 0;
  for (let i = 1; i < values.length; i++) if (Math.abs(values[i] - v) < Math.abs(values[best] - v)) best = i;
  return best;
}

/** Each grid value's index (the first, as nearest() finds it), for the data items that hold grid values exactly. */
function indexOfValue(values: readonly number[]): Map<number, number> {
  const out = new Map<number, number>();
  values.forEach((v, i) => {
    if (!Number.isNaN(v) && !out.has(v)) out.set(v, i);
  });
  return out;
}

export interface CellSeriesOptions {
  id: string;
  name: string;
  data: CellDatum[];
  xs: readonly number[];
  ys: readonly number[];
  /** The legend's swatch (the cells take the visual map's colour). */
  color: string;
  glyph?: CellGlyph;
  /** Glyph colour, or a function of the cell's value (light on dark cells). */
  glyphColor?: string | ((value: number) => string);
  /** An outline for cells close to the paper's colour. */
  outline?: string;
  tooltip?: (index: number) => string;
}

/** What a page needs to draw a cell series some other way than item by item (see src/ui/lib/cell-bitmap.ts): its options and each data item's grid position. */
export interface CellSeriesSpec {
  options: CellSeriesOptions;
  /** Cell edges along x and y (cellEdges). */
  xe: number[];
  ye: number[];
  /** Per data item: [x index, y index] in the grid. */
  position: (readonly [number, number])[];
}

/** The spec of every series cellSeries built, by the series object (nothing else holds it). */
export const CELL_SERIES = new WeakMap<object, CellSeriesSpec>();

/** A cell's rectangle: the cell at (x, y) of size w × h, less a hairline gap between cells big enough to show one. */
export function cellRect(x: number, y: number, w: number, h: number): { x: number; y: number; width: number; height: number } {
  const gap = w >= 6 && h >= 6 ? 0.5 : 0;
  return { x: x + gap, y: y + gap, width: Math.max(0.5, w - 2 * gap), height: Math.max(0.5, h - 2 * gap) };
}

/** Whether a cell of w × h draws its rectangle alone, with no outline and no glyph (cellElements gives a plain filled rect). */
export function cellIsPlain(o: CellSeriesOptions, w: number, h: number): boolean {
  const gap = w >= 6 && h >= 6;
  return !(o.outline && gap) && (!o.glyph || Math.min(w, h) < 7);
}

/** A cell's graphic elements (ECharts custom-series element options): its rectangle, and its glyph where it is big enough. */
export function cellElements(o: CellSeriesOptions, x: number, y: number, w: number, h: number, fill: string, value: number): unknown {
  const gap = w >= 6 && h >= 6 ? 0.5 : 0;
  const rect = {
    type: 'rect',
    shape: cellRect(x, y, w, h),
    style: { fill, stroke: o.outline ?? null, lineWidth: o.outline && gap ? 1 : 0 },
  };
  const size = Math.min(w, h);
  if (!o.glyph || size < 7) return rect;
  const ink = typeof o.glyphColor === 'function' ? o.glyphColor(value) : (o.glyphColor ?? PALETTE.ink);
  const cx = x + w / 2;
  const cy = y + h / 2;
  const r = Math.min(size * 0.28, 6);
  const line = (x1: number, y1: number, x2: number, y2: number) => ({ type: 'line', shape: { x1, y1, x2, y2 }, style: { stroke: ink, lineWidth: size >= 14 ? 1.6 : 1.1 } });
  const glyph =
    o.glyph === 'cross'
      ? [line(cx - r, cy - r, cx + r, cy + r), line(cx - r, cy + r, cx + r, cy - r)]
      : o.glyph === 'slash'
        ? [line(cx - r, cy + r, cx + r, cy - r)]
        : [{ type: 'circle', shape: { cx, cy, r: Math.max(1.2, r * 0.55) }, style: { fill: ink } }];
  return { type: 'group', children: [rect, ...glyph] };
}

/** One class of cells as an ECharts custom series on value axes. */
export function cellSeries(o: CellSeriesOptions): CustomSeriesOption {
  const xe = cellEdges(o.xs);
  const ye = cellEdges(o.ys);
  const column = indexOfValue(o.xs);
  const row = indexOfValue(o.ys);
  const position = o.data.map(([x, y]) => [column.get(x) ?? nearest(o.xs, x), row.get(y) ?? nearest(o.ys, y)] as const);
  const series = {
    id: o.id,
    name: o.name,
    type: 'custom',
    data: o.data,
    encode: { x: 0, y: 1, tooltip: [0, 1] },
    itemStyle: { color: o.color, ...(o.outline ? { borderColor: o.outline, borderWidth: 1 } : {}) },
    clip: true,
    z: 2,
    tooltip: o.tooltip ? { formatter: (p: unknown) => o.tooltip!((p as { value: CellDatum }).value[3]) } : undefined,
    renderItem: (params: CustomSeriesRenderItemParams, api: CustomSeriesRenderItemAPI) => {
      const [ix, iy] = position[params.dataIndex];
      const a = api.coord([xe[ix], ye[iy + 1]]);
      const b = api.coord([xe[ix + 1], ye[iy]]);
      const x = Math.min(a[0], b[0]);
      const y = Math.min(a[1], b[1]);
      const w = Math.abs(b[0] - a[0]);
      const h = Math.abs(b[1] - a[1]);
      return cellElements(o, x, y, w, h, api.visual('color') as string, api.value(2) as number) as never;
    },
  } as CustomSeriesOption;
  CELL_SERIES.set(series, { options: o, xe, ye, position });
  return series;
}

/** A value axis over the cells' full extent with round ticks. */
export function cellAxis(which: 'x' | 'y', name: string, values: readonly number[], extra: Record<string, unknown> = {}): XAXisComponentOption | YAXisComponentOption {
  const edges = cellEdges(values);
  const lo = edges[0];
  const hi = edges[edges.length - 1];
  const ticks = niceTicks(lo, hi, which === 'x' ? 7 : 6);
  const common = {
    min: lo,
    max: hi,
    axisLabel: { customValues: ticks.values, formatter: (v: number) => tickText(v, ticks.decimals), fontSize: TYPE.axisLabel, color: PALETTE.ink },
    axisTick: { customValues: ticks.values, lineStyle: { color: PALETTE.ink } },
    splitLine: { show: false },
    ...extra,
  };
  return which === 'x' ? valueXAxis(name, common) : valueYAxis(name, common);
}

/** The current scenario's point on a cell map: a ring with a label, above the cells. */
export function currentPointSeries(x: number, y: number, label = 'current scenario'): ScatterSeriesOption {
  return {
    id: 'current',
    name: label,
    type: 'scatter',
    data: [[x, y]],
    symbol: 'circle',
    symbolSize: 16,
    itemStyle: { color: 'rgba(255,255,255,0.25)', borderColor: PALETTE.ink, borderWidth: 3 },
    label: { show: true, position: 'right', formatter: 'current', fontSize: TYPE.label, color: PALETTE.ink, backgroundColor: 'rgba(255,255,255,0.9)', padding: [2, 4] },
    silent: true,
    z: 10,
  };
}

// ECharts colours a custom series' items through a visual map over their value (dimension 2).

/** A hidden map that paints every cell of series `seriesIndex` one colour. */
export function constantVisualMap(seriesIndex: number, color: string): VisualMapComponentOption {
  return { type: 'piecewise', show: false, seriesIndex, dimension: 2, pieces: [{ min: -Infinity, max: Infinity }], inRange: { color: [color] } };
}

/** The shown map of series `seriesIndex`'s cells from 0 (darkest) to 1 (marginal) on the stable ramp, at the figure's right. */
export function stableRampVisualMap(seriesIndex: number, frame: Required<Frame>, text: [top: string, bottom: string]): VisualMapComponentOption {
  return {
    type: 'continuous',
    seriesIndex,
    dimension: 2,
    min: 0,
    max: 1,
    inRange: { color: [...STABILITY_COLORS.stableRamp] },
    text,
    textStyle: { fontSize: TYPE.label, color: PALETTE.ink },
    calculable: true,
    precision: 2,
    orient: 'vertical',
    right: 16,
    top: 'middle',
    itemHeight: Math.max(80, Math.min(240, frame.height - 260)),
  };
}
