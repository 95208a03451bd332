// Cell maps (basin, stability regions) in the page as bitmaps instead of one ECharts element per
// cell: a 121 × 121 basin is 14,641 cells, and ECharts spent hundreds of milliseconds of
// main-thread work taking in, colouring and drawing that many data items. Here each cell series
// hands ECharts one data item (its name, legend entry and visual map stay ECharts'), whose
// element is an image of the whole series: the page paints every cell into it, with the same
// geometry and colours as the element per cell (cellElements; colours from ECharts' own visual
// maps, so legend and visual-map filters still apply), in a task after the figure's first frame.
// Pointer hits, tooltips and clicks are found from the grid (cellAt) since the image does not know
// its cells. Files (SVG, PNG) keep the element per cell: only the option drawn in the page is
// changed.

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

/** What the page's chart gives the cell images: each cell's colour, and a redraw once they are painted. */
export interface CellPainter {
  /**
   * The colour a value of series `seriesIndex` is drawn in (its visual maps'), or null when it is
   * not drawn (out of a visual map's range); `key` changes whenever a colour may (the visual maps'
   * ranges and selections).
   */
  colorOf(seriesIndex: number): { key: string; color(value: number): string | null };
  /** The images hold new pixels: draw the chart again. */
  redraw(): void;
  /** Runs `paint` in a later task. */
  later(paint: () => void): void;
}

/** The cells of a bitmap-drawn map, by grid position. */
export interface CellMap {
  xe: readonly number[];
  ye: readonly number[];
  /** The cell at grid position (ix, iy), or null (no series holds it). */
  at(ix: number, iy: number): CellHit | null;
  /** Each cell series' index in the option and its data items as built (ECharts holds one item per series). */
  series: { index: number; data: readonly unknown[] }[];
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
export function bitmapCells(option: { series?: unknown; tooltip?: unknown }, painter: CellPainter): CellMap | null {
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
    const { xs, ys } = c.spec.options;
    // one item inside the grid: the series' image (ECharts filters items outside the axes)
    c.series.data = [[xs[0], ys[0], 0, -1]];
    c.series.renderItem = imageRenderItem(c.spec, c.index, c.colors, painter);
    c.series.silent = true; // hits come from the grid (cellAt)
  });
  // the tooltip shows on the page's own pointer handling (showTip) alone: ECharts' would hide it,
  // finding no element under the pointer
  const tips = Array.isArray(option.tooltip) ? option.tooltip : [option.tooltip ?? {}];
  option.tooltip = tips.map((t) => ({ ...(t as object), triggerOn: 'none' }));
  return {
    xe,
    ye,
    series: cells.map((c) => ({ index: c.index, data: c.spec.options.data })),
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

interface Brush {
  g: CanvasRenderingContext2D;
  fill: string | null;
}

/**
 * The series' one item draws an image of all its cells. The image is painted in a later task
 * (the figure's first frame lays out its axes, legend and colour bar alone), and again whenever the
 * cells' pixel edges or colours change (a resize, a visual map's range); `colors` receives each
 * item's colour by data index.
 */
function imageRenderItem(spec: CellSeriesSpec, seriesIndex: number, colors: string[], painter: CellPainter) {
  const { xe, ye, options, position } = spec;
  let canvas: HTMLCanvasElement | null = null;
  let painted = '';
  let pending = '';
  return (params: CustomSeriesRenderItemParams, api: CustomSeriesRenderItemAPI) => {
    // pixel edges: the axes are linear and separate, so a column's edges do not depend on the row
    const px = xe.map((x) => api.coord([x, ye[0]])[0]);
    const py = ye.map((y) => api.coord([xe[0], y])[1]);
    const area = params.coordSys as unknown as { x: number; y: number; width: number; height: number };
    const x0 = Math.floor(Math.min(area.x, ...px)) - 1;
    const y0 = Math.floor(Math.min(area.y, ...py)) - 1;
    const width = Math.ceil(Math.max(area.x + area.width, ...px)) + 1 - x0;
    const height = Math.ceil(Math.max(area.y + area.height, ...py)) + 1 - y0;
    const ratio = Math.max(1, Math.min(3, Math.round(globalThis.devicePixelRatio || 1)));
    // what the pixels depend on: the edges and the visual maps' state
    const key = `${px.join()};${py.join()};${ratio};${painter.colorOf(seriesIndex).key}`;
    canvas ??= document.createElement('canvas');
    const image = canvas;
    if (key !== painted && key !== pending) {
      pending = key;
      painter.later(() => {
        if (pending !== key) return; // a later render asked for other pixels
        pending = '';
        painted = key;
        image.width = width * ratio;
        image.height = height * ratio;
        const g = image.getContext('2d')!;
        g.setTransform(ratio, 0, 0, ratio, -x0 * ratio, -y0 * ratio);
        const brush: Brush = { g, fill: null };
        const colorAt = painter.colorOf(seriesIndex).color;
        const memo = new Map<number, string | null>();
        options.data.forEach((datum, i) => {
          const value = datum[2];
          let fill = memo.get(value);
          if (fill === undefined) {
            fill = colorAt(value);
            memo.set(value, fill);
          }
          if (!fill) return; // not drawn (as an element with no fill)
          colors[i] = fill;
          const [ix, iy] = position[i];
          // as cellSeries' renderItem: a at (left edge, upper value edge), b at (right edge, lower value edge)
          const ax = px[ix];
          const bx = px[ix + 1];
          const ay = py[iy + 1];
          const by = py[iy];
          const [x, y, w, h] = [Math.min(ax, bx), Math.min(ay, by), Math.abs(bx - ax), Math.abs(by - ay)];
          if (cellIsPlain(options, w, h)) {
            // the common case of a big grid (small cells): a filled rectangle, no element objects
            const r = cellRect(x, y, w, h);
            if (fill !== brush.fill) g.fillStyle = brush.fill = fill;
            g.fillRect(r.x, r.y, r.width, r.height);
          } else paint(brush, cellElements(options, x, y, w, h, fill, value) as Element);
        });
        painter.redraw();
      });
    }
    return { type: 'image', silent: true, style: { image, x: x0, y: y0, width, height } } as never;
  };
}

function paint(brush: Brush, e: Element): void {
  const g = brush.g;
  if (e.type === 'group') {
    for (const child of e.children ?? []) paint(brush, child);
    return;
  }
  const { fill, stroke, lineWidth = 0 } = e.style;
  const s = e.shape;
  const stroked = !!stroke && lineWidth > 0;
  if (e.type === 'rect' && !stroked) {
    if (!fill) return;
    if (fill !== brush.fill) g.fillStyle = brush.fill = fill;
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
    if (fill !== brush.fill) g.fillStyle = brush.fill = fill;
    g.fill();
  }
  if (stroked) {
    g.strokeStyle = stroke;
    g.lineWidth = lineWidth;
    g.stroke();
  }
}
