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

/** Stability classes (scan): stable is a dark ramp, unstable light amber, none near-white. */
export const STABILITY_COLORS = {
  /** |slope| = 0 (strongly stable) to |slope| -> 1 (marginal): L* 24 to 58. */
  stableRamp: ['#1b3a66', '#5d8fc9'],
  unstable: '#f2c46d', // L* 82
  none: '#f4f2ee', // L* 96
} as const;

/** Basin outcomes: converged dark blue; wandering saturated amber; fell a neutral ramp by stride. */
export const OUTCOME_COLORS = {
  converged: PALETTE.deepBlue, // L* 33
  wandering: PALETTE.amber, // L* 70, chroma ~60 against the ramp's ~5
  /** Fell at stride 0 (pale, L* 92) to fell at the last stride (darker, L* 55). */
  fellRamp: ['#ece9e5', '#8a8178'],
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

/** `1 stride`, `3 strides`. */
export function plural(n: number, noun: string): string {
  return `${n} ${noun}${n === 1 ? '' : 's'}`;
}
