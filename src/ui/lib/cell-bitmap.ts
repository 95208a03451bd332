// Cell maps (basin, stability regions) in the page as bitmaps instead of one ECharts element per
// cell: a 121 × 121 basin is 14,641 cells, and ECharts spent hundreds of milliseconds of
// main-thread work creating, diffing and painting that many elements (drawn a few hundred a frame,
// every frame a long task). Here each cell paints itself into a canvas, with the same geometry and
// colours as the element per cell (cellElements; colours from ECharts' own visual maps, so legend
// and visual-map filters still apply), and each render round of a series (250 cells a frame)
// shows its canvas as one image. Pointer hits, tooltips and clicks are found
// from the grid (cellAt) since the image does not know its cells. Files (SVG, PNG) keep the element
// per cell: only the option drawn in the page is changed.

import type { CustomSeriesRenderItemAPI, CustomSeriesRenderItemParams } from 'echarts';
import { CELL_SERIES, cellElements, cellIsPlain, cellRect, type CellSeriesSpec } from '../../core/figures/cells.js';

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
  progressiveThreshold?: number;
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
    c.series.progressive = CELLS_PER_ROUND;
    c.series.progressiveThreshold = CELLS_PER_ROUND;
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

/**
 * Items per render round: ECharts draws a bigger series progressively, this many items a frame
 * (its visual maps too), so a frame stays short whatever the grid; each round paints its own
 * bitmap over the box of its cells.
 */
export const CELLS_PER_ROUND = 250;

interface Round {
  px: number[];
  py: number[];
  g: CanvasRenderingContext2D;
  element: unknown;
  fill: string | null;
}

/**
 * `colors` receives each item's colour (by data index: the cell series are never filtered). Each
 * render round (params.context is new for each) paints into a canvas of its own, which the round's
 * first item shows as one image; every item paints its own cell, with its own visual colour.
 */
function bitmapRenderItem(spec: CellSeriesSpec, colors: string[]) {
  const { xe, ye, options } = spec;
  const column = new Map(options.xs.map((x, i) => [x, i]));
  const row = new Map(options.ys.map((y, i) => [y, i]));
  const place = (api: CustomSeriesRenderItemAPI, i: number) => {
    const ix = column.get(api.value(0, i) as number);
    const iy = row.get(api.value(1, i) as number);
    return ix === undefined || iy === undefined ? null : [ix, iy];
  };
  function startRound(params: CustomSeriesRenderItemParams, api: CustomSeriesRenderItemAPI, first: number): Round {
    // pixel edges: the axes are linear and separate, so a column's edges do not depend on the row
    const px = xe.map((x) => api.coord([x, ye[0]])[0]);
    const py = ye.map((y) => api.coord([xe[0], y])[1]);
    // the box of this round's cells: a progressive round is the next CELLS_PER_ROUND items
    const last = Math.min(params.dataInsideLength, first + CELLS_PER_ROUND);
    let x0 = Infinity;
    let y0 = Infinity;
    let x1 = -Infinity;
    let y1 = -Infinity;
    for (let i = first; i < last; i++) {
      const at = place(api, i);
      if (!at) continue;
      const [ix, iy] = at;
      x0 = Math.min(x0, px[ix], px[ix + 1]);
      x1 = Math.max(x1, px[ix], px[ix + 1]);
      y0 = Math.min(y0, py[iy], py[iy + 1]);
      y1 = Math.max(y1, py[iy], py[iy + 1]);
    }
    const area = params.coordSys as unknown as { x: number; y: number; width: number; height: number };
    if (!(x1 > x0 && y1 > y0)) [x0, y0, x1, y1] = [area.x, area.y, area.x + area.width, area.y + area.height];
    x0 = Math.floor(x0) - 1;
    y0 = Math.floor(y0) - 1;
    const width = Math.ceil(x1) + 1 - x0;
    const height = Math.ceil(y1) + 1 - y0;
    const ratio = Math.max(1, Math.min(3, Math.round(globalThis.devicePixelRatio || 1)));
    const canvas = document.createElement('canvas');
    canvas.width = width * ratio;
    canvas.height = height * ratio;
    const g = canvas.getContext('2d')!;
    g.setTransform(ratio, 0, 0, ratio, -x0 * ratio, -y0 * ratio);
    return { px, py, g, fill: null, element: { type: 'image', silent: true, style: { image: canvas, x: x0, y: y0, width, height } } };
  }
  return (params: CustomSeriesRenderItemParams, api: CustomSeriesRenderItemAPI) => {
    const context = params.context as { round?: Round };
    const i = params.dataIndexInside;
    const opening = context.round === undefined;
    if (opening) context.round = startRound(params, api, i);
    const round = context.round as Round;
    const at = place(api, i);
    if (at) {
      const [ix, iy] = at;
      // as cellSeries' renderItem: a at (left edge, upper value edge), b at (right edge, lower value edge)
      const ax = round.px[ix];
      const bx = round.px[ix + 1];
      const ay = round.py[iy + 1];
      const by = round.py[iy];
      const color = api.visual('color') as string;
      colors[i] = color;
      const [x, y, w, h] = [Math.min(ax, bx), Math.min(ay, by), Math.abs(bx - ax), Math.abs(by - ay)];
      if (!color) {
        // no colour, nothing drawn (as an element with no fill)
      } else if (cellIsPlain(options, w, h)) {
        // the common case of a big grid (small cells): a filled rectangle, no element objects
        const r = cellRect(x, y, w, h);
        if (color !== round.fill) round.g.fillStyle = round.fill = color;
        round.g.fillRect(r.x, r.y, r.width, r.height);
      } else paint(round, cellElements(options, x, y, w, h, color, api.value(2) as number) as Element);
    }
    return (opening ? round.element : null) as never;
  };
}

function paint(round: Round, e: Element): void {
  const g = round.g;
  if (e.type === 'group') {
    for (const child of e.children ?? []) paint(round, child);
    return;
  }
  const { fill, stroke, lineWidth = 0 } = e.style;
  const s = e.shape;
  const stroked = !!stroke && lineWidth > 0;
  if (e.type === 'rect' && !stroked) {
    if (!fill) return;
    if (fill !== round.fill) g.fillStyle = round.fill = fill;
    g.fillRect(s.x, s.y, s.width, s.height);
    return;
  }
  g.beginPath();
  if (e.type === 'rect') g.rect(s.x, s.y, s.width, s.height);
  else if (e.type === 'line') {
    g.moveTo(s.x1, s.y1);
    g.lineTo(s.x2, s.y2);
  } else if (e.type === 'circle') g.arc(s.cx, s.cy, s.r, 0, Math.PI * 2);
  if (fill && e.type !== 'line') {
    if (fill !== round.fill) g.fillStyle = round.fill = fill;
    g.fill();
  }
  if (stroked) {
    g.strokeStyle = stroke;
    g.lineWidth = lineWidth;
    g.stroke();
  }
}
