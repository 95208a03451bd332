// Cell maps (basin, stability regions) in the page as one bitmap per class of cells instead of one
// ECharts element per cell: a 121 × 121 basin is 14,641 cells, and ECharts spent hundreds of
// milliseconds of main-thread work creating, diffing and painting that many elements (drawn a few
// hundred a frame, every frame a long task). Here each cell series draws all its cells into one
// canvas, in the first item's render call, with the same geometry and colours as the element per
// cell (cellElements; colours from ECharts' own visual maps, so legend and visual-map filters still
// apply), and shows it as one image over the plot area. Pointer hits, tooltips and clicks are found
// from the grid (cellAt) since the image does not know its cells. Files (SVG, PNG) keep the element
// per cell: only the option drawn in the page is changed.

import type { CustomSeriesRenderItemAPI, CustomSeriesRenderItemParams } from 'echarts';
import { CELL_SERIES, cellElements, type CellSeriesSpec } from '../../core/figures/cells.js';

/** A cell under the pointer: its series, data item and tooltip text. */
export interface CellHit {
  seriesIndex: number;
  seriesId: string;
  seriesName: string;
  dataIndex: number;
  value: unknown;
  tooltip: string | null;
  /** Its colour as last drawn (the tooltip's border, as ECharts gives an item's tooltip). */
  color: string | undefined;
}

/** The cells of a bitmap-drawn map, by grid position. */
export interface CellMap {
  xe: readonly number[];
  ye: readonly number[];
  /** The cell at grid position (ix, iy), or null (no series holds it). */
  at(ix: number, iy: number): CellHit | null;
}

interface SeriesLike {
  id?: string;
  name?: string;
  type?: string;
  data?: unknown[];
  renderItem?: unknown;
  progressive?: number;
  silent?: boolean;
  [key: string]: unknown;
}

/**
 * Rewrites the option's cell series (built by core/figures/cells.ts cellSeries) to draw as bitmaps,
 * in place; returns how to find a cell by grid position, or null when the option has none (or cell
 * series on different grids, which then draw as before).
 */
export function bitmapCells(option: { series?: unknown; tooltip?: unknown }): CellMap | null {
  const series = option.series;
  if (!Array.isArray(series)) return null;
  const cells: { index: number; spec: CellSeriesSpec; series: SeriesLike; colors: string[] }[] = [];
  series.forEach((s, index) => {
    const spec = CELL_SERIES.get(s as object);
    if (spec) cells.push({ index, spec, series: s as SeriesLike, colors: [] });
  });
  if (cells.length === 0) return null;
  const { xe, ye } = cells[0].spec;
  if (cells.some((c) => !sameNumbers(c.spec.xe, xe) || !sameNumbers(c.spec.ye, ye))) return null;
  const nx = xe.length - 1;
  const owner = new Int32Array(nx * (ye.length - 1)).fill(-1); // which entry of `cells`
  const item = new Int32Array(owner.length);
  cells.forEach((c, k) => {
    c.spec.position.forEach(([ix, iy], dataIndex) => {
      owner[iy * nx + ix] = k;
      item[iy * nx + ix] = dataIndex;
    });
    c.series.renderItem = bitmapRenderItem(c.spec, c.colors);
    c.series.progressive = 0; // one render call draws the whole series
    c.series.silent = true; // hits come from the grid (cellAt)
  });
  // the tooltip shows on the page's own pointer handling (showTip) alone: ECharts' would hide it,
  // finding no element under the pointer
  const tips = Array.isArray(option.tooltip) ? option.tooltip : [option.tooltip ?? {}];
  option.tooltip = tips.map((t) => ({ ...(t as object), triggerOn: 'none' }));
  return {
    xe,
    ye,
    at(ix, iy) {
      if (ix < 0 || iy < 0 || ix >= nx || iy >= ye.length - 1) return null;
      const k = owner[iy * nx + ix];
      if (k < 0) return null;
      const { index, spec, series: s, colors } = cells[k];
      const dataIndex = item[iy * nx + ix];
      const value = spec.options.data[dataIndex];
      return {
        seriesIndex: index,
        seriesId: String(s.id),
        seriesName: String(s.name),
        dataIndex,
        value,
        tooltip: spec.options.tooltip ? spec.options.tooltip(value[3]) : null,
        color: colors[dataIndex],
      };
    },
  };
}

function sameNumbers(a: readonly number[], b: readonly number[]): boolean {
  return a === b || (a.length === b.length && a.every((v, i) => v === b[i]));
}

/** The index of the interval of sorted `edges` that holds v, or -1 outside them. */
export function intervalOf(edges: readonly number[], v: number): number {
  const n = edges.length - 1;
  if (!(n >= 1)) return -1;
  const up = edges[n] >= edges[0];
  const lo = up ? edges[0] : edges[n];
  const hi = up ? edges[n] : edges[0];
  if (!(v >= lo && v <= hi)) return -1;
  let a = 0;
  let b = n; // edges[a] <= v <= edges[b] (ascending)
  while (b - a > 1) {
    const m = (a + b) >> 1;
    if (edges[m] <= v === up) a = m;
    else b = m;
  }
  return a;
}

type Element = { type: string; shape: Record<string, number>; style: { fill?: string | null; stroke?: string | null; lineWidth?: number }; children?: Element[] };

/** `colors` receives each item's colour (by data index: the cell series are never filtered). */
function bitmapRenderItem(spec: CellSeriesSpec, colors: string[]) {
  const { xe, ye, options } = spec;
  const column = new Map(options.xs.map((x, i) => [x, i]));
  const row = new Map(options.ys.map((y, i) => [y, i]));
  let canvas: HTMLCanvasElement | null = null;
  return (params: CustomSeriesRenderItemParams, api: CustomSeriesRenderItemAPI) => {
    if (params.dataIndexInside !== 0) return null as never;
    const area = params.coordSys as unknown as { x: number; y: number; width: number; height: number };
    // pixel edges: the axes are linear and separate, so a column's edges do not depend on the row
    const px = xe.map((x) => api.coord([x, ye[0]])[0]);
    const py = ye.map((y) => api.coord([xe[0], y])[1]);
    const ratio = Math.max(1, Math.min(3, globalThis.devicePixelRatio || 1));
    canvas ??= document.createElement('canvas');
    canvas.width = Math.max(1, Math.ceil(area.width * ratio));
    canvas.height = Math.max(1, Math.ceil(area.height * ratio));
    const g = canvas.getContext('2d')!;
    g.setTransform(ratio, 0, 0, ratio, -area.x * ratio, -area.y * ratio);
    g.clearRect(area.x, area.y, area.width, area.height);
    const count = params.dataInsideLength;
    for (let i = 0; i < count; i++) {
      const ix = column.get(api.value(0, i) as number);
      const iy = row.get(api.value(1, i) as number);
      if (ix === undefined || iy === undefined) continue;
      // as cellSeries' renderItem: a at (left edge, upper value edge), b at (right edge, lower value edge)
      const ax = px[ix];
      const bx = px[ix + 1];
      const ay = py[iy + 1];
      const by = py[iy];
      const color = api.visual('color', i) as string;
      colors[i] = color;
      const element = cellElements(options, Math.min(ax, bx), Math.min(ay, by), Math.abs(bx - ax), Math.abs(by - ay), color, api.value(2, i) as number) as Element;
      paint(g, element);
    }
    // a fresh canvas object each draw, so ECharts sees a changed image and repaints
    const image = canvas;
    canvas = null;
    return { type: 'image', silent: true, style: { image, x: area.x, y: area.y, width: area.width, height: area.height } } as never;
  };
}

function paint(g: CanvasRenderingContext2D, e: Element): void {
  if (e.type === 'group') {
    for (const child of e.children ?? []) paint(g, child);
    return;
  }
  const { fill, stroke, lineWidth = 0 } = e.style;
  const s = e.shape;
  g.beginPath();
  if (e.type === 'rect') g.rect(s.x, s.y, s.width, s.height);
  else if (e.type === 'line') {
    g.moveTo(s.x1, s.y1);
    g.lineTo(s.x2, s.y2);
  } else if (e.type === 'circle') g.arc(s.cx, s.cy, s.r, 0, Math.PI * 2);
  if (fill && e.type !== 'line') {
    g.fillStyle = fill;
    g.fill();
  }
  if (stroke && lineWidth > 0) {
    g.strokeStyle = stroke;
    g.lineWidth = lineWidth;
    g.stroke();
  }
}
