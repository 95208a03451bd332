// Pronk's figure style: one palette, type sizes and axis/title builders shared by every figure.
//
// The palette is designed here for Pronk, on one rule: colours that must be told apart differ in
// CIE lightness L* (CIE 1976), because lightness survives every common colour-vision deficiency
// (protan, deutan and tritan dichromats all keep a luminance channel) and black-and-white print.
// Where a third class cannot get its own lightness band, it differs in chroma (a saturated amber
// against neutral greys) and in the legend. Hues stay on the blue-amber axis, the one pair that
// dichromats of all three kinds still see as two hues. Lines that share a plot also differ in
// dash pattern, so a grey print keeps them apart too.
//
// Nothing here touches a DOM: every builder returns plain ECharts option objects, the same in the
// browser and in Node (see svg.ts for Node's SVG output).

import type {
  EChartsOption,
  LegendComponentOption,
  TitleComponentOption,
  TooltipComponentOption,
  XAXisComponentOption,
  YAXisComponentOption,
} from 'echarts';

export type FigureOption = EChartsOption;

/** Colours by role. L* values (CIE 1976, D65) beside each, for the lightness rule above. */
export const PALETTE = {
  ink: '#22262e', // L* 15: text, axis lines, outlines
  muted: '#6b7280', // L* 48: secondary text, reference lines
  grid: '#dde0e6', // L* 89: split lines
  paper: '#ffffff',
  deepBlue: '#1f4e8c', // L* 33
  amber: '#e69a2e', // L* 70
  brick: '#a8432a', // L* 42
  sky: '#74b3e3', // L* 70 (never beside amber without a dash or a marker difference)
  slate: '#4d5361', // L* 35
  sand: '#d9c48c', // L* 80
} as const;

/** Series colours in order of use; past the sixth, the dash pattern changes (seriesDash). */
export const SERIES_COLORS: readonly string[] = [PALETTE.deepBlue, PALETTE.amber, PALETTE.brick, PALETTE.sky, PALETTE.slate, PALETTE.sand];
const DASHES = ['solid', 'dashed', 'dotted'] as const;

export function seriesColor(i: number): string {
  return SERIES_COLORS[i % SERIES_COLORS.length];
}

export function seriesDash(i: number): (typeof DASHES)[number] {
  return DASHES[Math.floor(i / SERIES_COLORS.length) % DASHES.length];
}

/**
 * One colour per state, the same in every figure and in the workbench's text (where a glyph in
 * the colour stands beside the word, so that colour is never the only cue). L* beside each.
 * stable / unstable: fixed points and scan cells; converged / wandering / fell: basin and rollout
 * outcomes. Figures add a second cue: marker shape (return map), a glyph in the cell (heat maps).
 */
export const STATE_COLORS = {
  stable: '#1f4e8c', // L* 33, blue
  unstable: '#e69a2e', // L* 70, amber
  converged: '#2f7f6f', // L* 48, teal
  wandering: '#f2cf5b', // L* 84, light yellow, with a dot in the cell
  fell: '#8f2f1b', // L* 32, brick, with a cross in the cell
  none: '#ebe8e1', // L* 92, "no fixed point": near the paper, outlined
} as const;

export type StateName = keyof typeof STATE_COLORS;

/** The glyph that goes with each state in text and legends (shape, not colour, tells them apart). */
export const STATE_GLYPHS: Record<StateName, string> = {
  stable: '●',
  unstable: '○',
  converged: '■',
  wandering: '◆',
  fell: '✕',
  none: '·',
};

/** Stability classes (scan): stable shaded by |slope| from the state's blue to a lighter blue. */
export const STABILITY_COLORS = {
  /** |slope| = 0 (strongly stable) to |slope| -> 1 (marginal): L* 33 to 58. */
  stableRamp: [STATE_COLORS.stable, '#5d8fc9'],
  unstable: STATE_COLORS.unstable,
  none: STATE_COLORS.none,
} as const;

/** Basin outcomes: fell shaded by the stride it fell at, darkest (never pale) at stride 0. */
export const OUTCOME_COLORS = {
  converged: STATE_COLORS.converged,
  wandering: STATE_COLORS.wandering,
  /** Fell at stride 0 (the state's brick, L* 32) to fell at the last stride (L* 66). */
  fellRamp: [STATE_COLORS.fell, '#d98f78'],
} as const;

/** CIE 1976 L* of an sRGB colour '#rrggbb' (sRGB transfer curve, IEC 61966-2-1; D65 white). */
export function lightness(hex: string): number {
  const m = /^#([0-9a-f]{2})([0-9a-f]{2})([0-9a-f]{2})$/i.exec(hex);
  if (!m) throw new Error(`not a #rrggbb colour: ${hex}`);
  const [r, g, b] = [m[1], m[2], m[3]].map((h) => {
    const v = parseInt(h, 16) / 255;
    return v <= 0.04045 ? v / 12.92 : ((v + 0.055) / 1.055) ** 2.4;
  });
  const y = 0.2126 * r + 0.7152 * g + 0.0722 * b;
  const f = y > 216 / 24389 ? Math.cbrt(y) : ((24389 / 27) * y + 16) / 116;
  return 116 * f - 16;
}

// Type sizes for a 1280 × 800 figure that still reads when printed at a column's width.
export const TYPE = { title: 20, subtitle: 14, axisName: 15, axisLabel: 13, legend: 14, label: 13 } as const;
export const FONT_FAMILY = 'Helvetica, Arial, sans-serif';

/** Default size of a figure, px (the CLI's SVG and the workbench's panels). */
export const FIGURE_SIZE = { width: 1280, height: 800 } as const;

/** What every figure starts from: font, white paper, no animation, a description for screen readers. */
export function baseOption(description: string): FigureOption {
  return {
    animation: false,
    backgroundColor: PALETTE.paper,
    color: [...SERIES_COLORS],
    textStyle: { fontFamily: FONT_FAMILY, color: PALETTE.ink },
    aria: { enabled: true, label: { description } },
  };
}

export function title(text: string, subtext: string): TitleComponentOption {
  return {
    text,
    subtext,
    left: 24,
    top: 14,
    textStyle: { fontSize: TYPE.title, fontWeight: 'bold', color: PALETTE.ink },
    subtextStyle: { fontSize: TYPE.subtitle, color: PALETTE.muted, lineHeight: 20 },
    itemGap: 8,
  };
}

export function legend(extra: LegendComponentOption = {}): LegendComponentOption {
  return {
    top: 86,
    left: 'center',
    itemGap: 22,
    textStyle: { fontSize: TYPE.legend, color: PALETTE.ink },
    ...extra,
  };
}

/** Where a figure is drawn: its size in px and whether it carries its title and subtitle. */
export interface Frame {
  width: number;
  height: number;
  /** Title and subtitle drawn (a file: yes; a workbench panel, which has its own headings: no). */
  title?: boolean;
}

/** The frame of a figure file (the CLI's --plot, the workbench's SVG and PNG downloads). */
export const FILE_FRAME: Required<Frame> = { ...FIGURE_SIZE, title: true };

export function frameOf(frame?: Frame): Required<Frame> {
  if (!frame) return FILE_FRAME;
  const size = (v: number, fallback: number) => (Number.isFinite(v) && v >= 120 ? v : fallback);
  return { width: size(frame.width, FIGURE_SIZE.width), height: size(frame.height, FIGURE_SIZE.height), title: frame.title ?? true };
}

// Glyph widths in em of Helvetica / Arial (and their metric twin Liberation Sans), rounded up by
// about 8 %, so that a legend row estimated to fit does fit.
function glyphEm(ch: string): number {
  if (' .,:;\'|!il()[]'.includes(ch)) return 0.3;
  if ('fjrt-'.includes(ch)) return 0.33;
  if ('mwMW%@'.includes(ch)) return 0.92;
  if (/[A-Z]/.test(ch)) return 0.72;
  if (/[0-9]/.test(ch)) return 0.6;
  return 0.53;
}

/** A text's width in px at `fontSize`, estimated on the wide side (no DOM here). */
export function textWidth(text: string, fontSize: number): number {
  let em = 0;
  for (const ch of text) em += glyphEm(ch);
  return em * fontSize;
}

const LEGEND_ICON = 25;
const LEGEND_ICON_GAP = 5;
const LEGEND_GAP = 20;
/** Vertical distance between legend rows, px. */
export const LEGEND_ROW = 24;

/** Legend entries packed into rows no wider than `width` (every entry shown: never a paged legend). */
export function legendRows(names: readonly string[], width: number): string[][] {
  const rows: string[][] = [];
  let row: string[] = [];
  let used = 0;
  for (const name of names) {
    const w = LEGEND_ICON + LEGEND_ICON_GAP + textWidth(name, TYPE.legend);
    if (row.length > 0 && used + LEGEND_GAP + w > width) {
      rows.push(row);
      row = [];
      used = 0;
    }
    used += (row.length > 0 ? LEGEND_GAP : 0) + w;
    row.push(name);
  }
  if (row.length) rows.push(row);
  return rows;
}

export interface Header {
  title: TitleComponentOption | undefined;
  legend: LegendComponentOption[];
  /** The top of the plot area, px: below the title and every legend row, with room for a value axis' top label. */
  top: number;
}

/**
 * A figure's title (when the frame has one) and its legend, one legend component per row, each
 * row centred, as many rows as the entries need at the frame's width; `top` is where the plot
 * area can start.
 */
export function header(frame: Required<Frame>, text: string, subtext: string, names: readonly string[], gap = 28): Header {
  const lines = subtext ? subtext.split('\n').length : 0;
  const titleHeight = frame.title ? 14 + 24 + (lines ? 8 + 20 * lines : 0) + 12 : 8;
  const rows = legendRows(names, frame.width - 48);
  const legends = rows.map((row, i) => legend({ data: row, top: titleHeight + i * LEGEND_ROW }));
  return {
    title: frame.title ? title(text, subtext) : undefined,
    legend: legends,
    top: titleHeight + rows.length * LEGEND_ROW + gap,
  };
}

export function tooltip(extra: TooltipComponentOption = {}): TooltipComponentOption {
  return { trigger: 'item', confine: true, textStyle: { fontSize: TYPE.label }, ...extra };
}

type AxisExtra = Record<string, unknown> & { axisLabel?: Record<string, unknown> };

// The extras win, but a partial axisLabel keeps the figure's type size and colour.
function merged(common: Record<string, unknown> & { axisLabel: Record<string, unknown> }, extra: AxisExtra): Record<string, unknown> {
  return { ...common, ...extra, axisLabel: { ...common.axisLabel, ...(extra.axisLabel ?? {}) } };
}

// Axis names sit centred along the axis (not at its end), where a reader looks for them.
function axisCommon(name: string, nameGap: number) {
  return {
    name,
    nameLocation: 'middle' as const,
    nameGap,
    nameTextStyle: { fontSize: TYPE.axisName, color: PALETTE.ink },
    axisLabel: { fontSize: TYPE.axisLabel, color: PALETTE.ink },
    axisLine: { show: true, lineStyle: { color: PALETTE.ink } },
    axisTick: { show: true, lineStyle: { color: PALETTE.ink } },
    splitLine: { show: true, lineStyle: { color: PALETTE.grid } },
  };
}

export function valueXAxis(name: string, extra: AxisExtra = {}): XAXisComponentOption {
  return { type: 'value', ...merged(axisCommon(name, 34), extra) } as XAXisComponentOption;
}

export function valueYAxis(name: string, extra: AxisExtra = {}): YAXisComponentOption {
  return { type: 'value', ...merged(axisCommon(name, 64), extra) } as YAXisComponentOption;
}

export function categoryXAxis(name: string, data: string[], extra: AxisExtra = {}): XAXisComponentOption {
  return {
    type: 'category',
    data,
    ...merged({ ...axisCommon(name, 34), splitLine: { show: false }, axisTick: { show: true, alignWithLabel: true, lineStyle: { color: PALETTE.ink } } }, extra),
  } as XAXisComponentOption;
}

export function categoryYAxis(name: string, data: string[], extra: AxisExtra = {}): YAXisComponentOption {
  return {
    type: 'category',
    data,
    ...merged({ ...axisCommon(name, 64), splitLine: { show: false }, axisTick: { show: true, alignWithLabel: true, lineStyle: { color: PALETTE.ink } } }, extra),
  } as YAXisComponentOption;
}

// ---------------------------------------------------------------------------------------------
// Numbers in labels.

/** A number for a label: `digits` significant digits, no exponent for everyday magnitudes, no -0. */
export function num(x: number | null | undefined, digits = 4): string {
  if (x === null || x === undefined || !Number.isFinite(x)) return '–';
  if (x === 0) return '0';
  const a = Math.abs(x);
  if (a >= 1e-3 && a < 1e6) {
    const decimals = Math.max(0, digits - 1 - Math.floor(Math.log10(a)));
    const text = x.toFixed(Math.min(decimals, 12));
    return text.includes('.') ? text.replace(/\.?0+$/, '') : text;
  }
  return x.toExponential(digits - 1);
}

/** Category labels for grid values: enough decimals to tell neighbours apart, no more. */
export function gridLabels(values: readonly number[]): string[] {
  if (values.length < 2) return values.map((v) => num(v, 6));
  let step = Infinity;
  for (let i = 1; i < values.length; i++) step = Math.min(step, Math.abs(values[i] - values[i - 1]));
  const decimals = step > 0 ? Math.min(8, Math.max(0, Math.ceil(-Math.log10(step)) + 1)) : 6;
  return values.map((v) => {
    const text = v.toFixed(decimals);
    const trimmed = text.includes('.') ? text.replace(/\.?0+$/, '') : text;
    return trimmed === '-0' ? '0' : trimmed;
  });
}

/** A tick step of 1, 2 or 5 × 10^k near span / target (common practice for axis ticks). */
export function niceStep(span: number, target = 5): number {
  if (!(span > 0) || !Number.isFinite(span)) return 1;
  const raw = span / target;
  const power = 10 ** Math.floor(Math.log10(raw));
  const fraction = raw / power;
  return (fraction <= 1 ? 1 : fraction <= 2 ? 2 : fraction <= 5 ? 5 : 10) * power;
}

/** [lo, hi] widened to multiples of a nice step (at least `pad` of the span beyond the data). */
export function niceRange(lo: number, hi: number, pad = 0.02): [number, number] {
  if (!Number.isFinite(lo) || !Number.isFinite(hi)) return [0, 1];
  if (hi < lo) [lo, hi] = [hi, lo];
  let span = hi - lo;
  if (span === 0) span = Math.abs(lo) > 0 ? Math.abs(lo) * 0.1 : 1;
  const step = niceStep(span + 2 * pad * span, 10);
  const round = (x: number) => Number(x.toPrecision(12));
  return [round(Math.floor((lo - pad * span) / step) * step), round(Math.ceil((hi + pad * span) / step) * step)];
}

/** Round tick values (1, 2 or 5 × 10^k apart) inside [lo, hi], and the decimals they need. */
export function niceTicks(lo: number, hi: number, target = 6): { values: number[]; decimals: number; step: number } {
  const step = niceStep(hi - lo, target);
  const decimals = Math.max(0, -Math.floor(Math.log10(step) + 1e-9));
  const values: number[] = [];
  const first = Math.ceil(lo / step - 1e-9);
  for (let k = first; k * step <= hi + step * 1e-9; k++) values.push(Number((k * step).toFixed(Math.min(12, decimals + 2))));
  return { values, decimals, step };
}

/** A tick label with exactly `decimals` decimals (no -0). */
export function tickText(value: number, decimals: number): string {
  const text = value.toFixed(decimals);
  return /^-0(\.0*)?$/.test(text) ? text.slice(1) : text;
}

/** `1 stride`, `3 strides`. */
export function plural(n: number, noun: string): string {
  return `${n} ${noun}${n === 1 ? '' : 's'}`;
}
