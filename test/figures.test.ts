// The figures (src/core/figures): each builder's series carry the analysis numbers unchanged,
// renderSvg gives a well-formed SVG with the axis names and every series drawn, and the CLI's
// --plot writes one for map, basin, robustness, scan and merge (bad values exit 2 naming --plot).
//
// Check values come from the analyses themselves (a figure must show its result's numbers), from
// closed forms (leg geometry, the 1:1 aspect) or from the CIE 1976 lightness formula.

import { spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { loadEngine, type BatchRequest } from '../src/core/engine.js';
import { InputError } from '../src/core/errors.js';
import { apexReturnMap, type ReturnMapResult } from '../src/core/analysis/return-map.js';
import { scan, type ScanResult } from '../src/core/analysis/scan.js';
import { basinRows, basinRunOptions, finishBasin, type BasinResult } from '../src/core/analysis/basin.js';
import { terrainRobustness, type RobustnessResult } from '../src/core/analysis/robustness.js';
import { stepTolerance, type StepToleranceResult } from '../src/core/analysis/stepdown.js';
import { minimize } from '../src/core/optimize/nlopt.js';
import { simulate, type SimulationResult } from '../src/core/simulate.js';
import { demoScenario, parseScenario, type Scenario } from '../src/core/scenario.js';
import {
  FIGURES,
  OUTCOME_COLORS,
  PALETTE,
  STABILITY_COLORS,
  STATE_COLORS,
  cellEdges,
  legendRows,
  niceTicks,
  returnMapComparisonFigure,
  basinFigure,
  cobweb,
  convergenceFigure,
  figureForCommand,
  groundFromTrajectory,
  lightness,
  policyComparisonFigure,
  returnMapFigure,
  stabilityRegionsFigure,
  stanceForceFigure,
  stanceSamples,
  strideScene,
  survivalFigure,
  type ConvergenceRestart,
  type FigureOption,
} from '../src/core/figures/index.js';
import { renderSvg } from '../src/core/figures/svg.js';
import { lateralBasin, type LateralBasinResult } from '../src/core/analysis/lateral-basin.js';
import { lateralBasinFigure } from '../src/core/figures/lateral-basin.js';
import { lateralScan, type LateralScanResult } from '../src/core/analysis/lateral-scan.js';
import { lateralScanFigure } from '../src/core/figures/lateral-scan.js';
import { parseLateralScenario } from '../src/core/models/lateral.js';
import demoHexapod from '../scenarios/demo-hexapod.json' with { type: 'json' };

// ---------------------------------------------------------------------------------------------
// Reading options back.

interface AnySeries {
  id: string;
  name: string;
  type: string;
  data: unknown[];
  markLine?: { data: Record<string, unknown>[] };
  lineStyle?: { color?: string };
  itemStyle?: { color?: string };
  xAxisIndex?: number;
  yAxisIndex?: number;
}

function seriesOf(option: FigureOption): AnySeries[] {
  return option.series as unknown as AnySeries[];
}

function series(option: FigureOption, id: string): AnySeries {
  const found = seriesOf(option).find((s) => s.id === id);
  if (!found) throw new Error(`no series ${id}; have ${seriesOf(option).map((s) => s.id).join(', ')}`);
  return found;
}

const values = (s: AnySeries) => s.data.map((d) => (Array.isArray(d) ? d : (d as { value: unknown[] }).value));
const axes = (option: FigureOption, key: 'xAxis' | 'yAxis') => {
  const a = option[key] as unknown;
  return (Array.isArray(a) ? a : [a]) as Record<string, unknown>[];
};

// ---------------------------------------------------------------------------------------------
// A strict XML well-formedness check (XML 1.0 §2-3 for what an SVG file uses): one root element,
// properly nested and closed tags, quoted attributes without '<' or duplicates, only the five
// predefined or numeric entity references, comments, CDATA sections and processing instructions.

function checkWellFormedXml(text: string): { root: string; elements: number } {
  const name = /^[A-Za-z_:][-A-Za-z0-9_:.]*/;
  const stack: string[] = [];
  let root = '';
  let elements = 0;
  let closedRoot = false;
  let i = 0;
  const fail = (why: string): never => {
    throw new Error(`not well-formed XML at ${i}: ${why}: ${JSON.stringify(text.slice(Math.max(0, i - 40), i + 40))}`);
  };
  const checkText = (chunk: string) => {
    if (stack.length === 0 && chunk.trim() !== '') fail('text outside the root element');
    for (const m of chunk.matchAll(/&([^;\s]*);?/g)) {
      if (!m[0].endsWith(';') || !/^(lt|gt|amp|quot|apos|#\d+|#x[0-9a-fA-F]+)$/.test(m[1])) fail(`bad entity reference ${m[0]}`);
    }
  };
  while (i < text.length) {
    const lt = text.indexOf('<', i);
    if (lt < 0) {
      checkText(text.slice(i));
      break;
    }
    checkText(text.slice(i, lt));
    i = lt;
    if (text.startsWith('<!--', i)) {
      const end = text.indexOf('-->', i + 4);
      if (end < 0) fail('unclosed comment');
      i = end + 3;
    } else if (text.startsWith('<![CDATA[', i)) {
      if (stack.length === 0) fail('CDATA outside the root');
      const end = text.indexOf(']]>', i);
      if (end < 0) fail('unclosed CDATA');
      i = end + 3;
    } else if (text.startsWith('<?', i)) {
      const end = text.indexOf('?>', i);
      if (end < 0) fail('unclosed processing instruction');
      i = end + 2;
    } else if (text.startsWith('<!', i)) {
      fail('a DOCTYPE or declaration (SVG output needs none)');
    } else if (text.startsWith('</', i)) {
      const m = name.exec(text.slice(i + 2));
      if (!m) fail('bad end tag');
      const tag = m![0];
      const close = text.indexOf('>', i);
      if (text.slice(i + 2 + tag.length, close).trim() !== '') fail('junk in end tag');
      if (stack.pop() !== tag) fail(`end tag </${tag}> does not match`);
      if (stack.length === 0) closedRoot = true;
      i = close + 1;
    } else {
      const m = name.exec(text.slice(i + 1));
      if (!m) fail('bad start tag');
      const tag = m![0];
      if (closedRoot) fail('a second root element');
      if (stack.length === 0) root = tag;
      elements++;
      let j = i + 1 + tag.length;
      const seen = new Set<string>();
      for (;;) {
        const ws = /^\s*/.exec(text.slice(j))![0].length;
        j += ws;
        if (text.startsWith('/>', j)) {
          j += 2;
          if (stack.length === 0) closedRoot = true;
          break;
        }
        if (text[j] === '>') {
          j += 1;
          stack.push(tag);
          break;
        }
        if (ws === 0) fail('attributes must be separated by white space');
        const a = name.exec(text.slice(j));
        if (!a) fail('bad attribute name');
        if (seen.has(a![0])) fail(`duplicate attribute ${a![0]}`);
        seen.add(a![0]);
        j += a![0].length;
        const eq = /^\s*=\s*/.exec(text.slice(j));
        if (!eq) fail(`attribute ${a![0]} has no value`);
        j += eq![0].length;
        const quote = text[j];
        if (quote !== '"' && quote !== "'") fail('unquoted attribute value');
        const end = text.indexOf(quote, j + 1);
        if (end < 0) fail('unclosed attribute value');
        const value = text.slice(j + 1, end);
        if (value.includes('<')) fail("'<' in an attribute value");
        for (const e of value.matchAll(/&([^;\s"']*);?/g)) {
          if (!e[0].endsWith(';') || !/^(lt|gt|amp|quot|apos|#\d+|#x[0-9a-fA-F]+)$/.test(e[1])) fail(`bad entity reference ${e[0]} in an attribute`);
        }
        j = end + 1;
      }
      i = j;
    }
  }
  if (stack.length) fail(`unclosed elements ${stack.join(' > ')}`);
  if (!root) fail('no root element');
  return { root, elements };
}

/** Texts of the SVG's <text> elements, entities decoded. */
function svgTexts(svg: string): string[] {
  const decode = (s: string) =>
    s.replace(/&(lt|gt|amp|quot|apos|#\d+|#x[0-9a-f]+);/gi, (_, e: string) =>
      e === 'lt' ? '<' : e === 'gt' ? '>' : e === 'amp' ? '&' : e === 'quot' ? '"' : e === 'apos' ? "'" : String.fromCodePoint(e[1] === 'x' ? parseInt(e.slice(2), 16) : parseInt(e.slice(1), 10)),
    );
  return [...svg.matchAll(/<text[^>]*>([^<]*)<\/text>/g)].map((m) => decode(m[1]));
}

const hexColor = (c: string | undefined) => (c ?? '').toLowerCase();

/**
 * Every series is drawn: a line as a polyline path in its colour with one vertex per point that is
 * not a gap (at least one path when it has points); item series (scatter, heatmap, bar, custom)
 * with at least one element per data item tagged with the series index; a series without data
 * but with a markLine has its lines drawn in the markLine's style.
 */
function expectEverySeriesDrawn(svg: string, option: FigureOption): void {
  const paths = [...svg.matchAll(/<path d="([^"]*)"[^>]*?stroke="([^"]+)"/g)].map((m) => ({ d: m[1], stroke: m[2].toLowerCase() }));
  seriesOf(option).forEach((s, index) => {
    if (s.type === 'line') {
      const points = values(s).filter((p) => Array.isArray(p) && p[0] !== null && p[1] !== null).length;
      if (points === 0) {
        expect(s.markLine?.data.length, `${s.id} has neither points nor mark lines`).toBeGreaterThan(0);
        return;
      }
      const color = hexColor(s.lineStyle?.color);
      const vertices = paths.filter((p) => p.stroke === color).map((p) => (p.d.match(/[ML]/g) ?? []).length);
      expect(vertices.length, `no path in ${color} for ${s.id}`).toBeGreaterThan(0);
      expect(Math.max(...vertices), `${s.id}: a polyline with a vertex per point`).toBeGreaterThanOrEqual(Math.min(points, 2));
    } else {
      const tagged = (svg.match(new RegExp(`ecmeta_series_index="${index}" ecmeta_data_index=`, 'g')) ?? []).length;
      const expected = s.type === 'custom' ? Math.max(0, s.data.length - 1) || s.data.length : s.data.length;
      expect(tagged, `${s.id}: one drawn element per data item`).toBeGreaterThanOrEqual(expected);
    }
  });
}

function expectSvg(option: FigureOption, axisNames: string[]): string {
  const svg = renderSvg(option, { width: 1280, height: 800 });
  const { root, elements } = checkWellFormedXml(svg);
  expect(root).toBe('svg');
  expect(elements).toBeGreaterThan(20);
  expect(svg).toMatch(/^<svg width="1280" height="800"/);
  const texts = svgTexts(svg);
  for (const name of axisNames) expect(texts, `axis name ${name}`).toContain(name);
  expectEverySeriesDrawn(svg, option);
  expect(svg).not.toMatch(/NaN/);
  return svg;
}

// ---------------------------------------------------------------------------------------------
// The analyses, run once in this thread on the invented demo robot (scenarios/demo.json).

const inProcess = async (req: BatchRequest) => (await loadEngine()).runBatch(req);

let demo: Scenario;
let map: ReturnMapResult;
let scanned: ScanResult;
let basinGrid: BasinResult;
let basinEnergy: BasinResult;
let lateral: LateralBasinResult;
let lateralScanned: LateralScanResult;
let robust: RobustnessResult;
let robustSteeper: RobustnessResult;
let steps: StepToleranceResult;
let stepsSteeper: StepToleranceResult;
let run: SimulationResult;
let restarts: ConvergenceRestart[];

function steeper(s: Scenario): Scenario {
  const raw = structuredClone(s) as unknown as { policy: { angle: Record<string, unknown> } };
  raw.policy.angle.rate_deg_per_s = 60;
  return parseScenario(raw);
}

beforeAll(async () => {
  demo = demoScenario();
  map = await apexReturnMap(demo, { samples: 41, iterations: 10, approx: true });
  scanned = await scan(demo, {
    x: { path: 'policy.angle.attack_at_apex_deg', lo: 60, hi: 70, n: 5 },
    y: { path: 'policy.angle.rate_deg_per_s', lo: 0, hi: 80, n: 4 },
    samples: 21,
  });
  const basin = async (options: Parameters<typeof basinRunOptions>[1]) => {
    const o = basinRunOptions(demo, options);
    const rows = await basinRows(demo, o, undefined, { runBatch: inProcess });
    return finishBasin(demo, o as unknown as Record<string, unknown>, rows);
  };
  basinGrid = await basin({ heights: { low: 0.42, high: 0.6, count: 7 }, speeds: { low: 2.5, high: 4, count: 7 }, strides: 10 });
  basinEnergy = await basin({ energy: true, heights: { low: 0.41, high: 0.9, count: 12 }, strides: 10 });
  const mc = { rollouts: 40, sigma_m: 0.02, seed: 7, strides: 12 };
  robust = await terrainRobustness(demo, mc, { runBatch: inProcess });
  robustSteeper = await terrainRobustness(steeper(demo), mc, { runBatch: inProcess });
  steps = await stepTolerance(demo, { after: 8 });
  stepsSteeper = await stepTolerance(steeper(demo), { after: 8 });
  run = await simulate(demo, { strides: 3, traceInterval_s: 0.002 });
  // the hexapod demo's lateral gait, perturbed in heading and angular velocity
  lateral = lateralBasin(await loadEngine(), parseLateralScenario(demoHexapod), {
    headings: { low: -20, high: 20, count: 5 },
    rates: { low: -40, high: 40, count: 5 },
    strides: 20,
  });
  // its stability over the attachment offset (behind, at, ahead of the centre of mass) and the touchdown angle
  lateralScanned = lateralScan(await loadEngine(), parseLateralScenario(demoHexapod), { path: 'body.attachment_offset_m', lo: -0.02, hi: 0.02, n: 3 }, { path: 'policy.angle.angle_to_body_deg', lo: 55, hi: 75, n: 2 });
  // two restarts of a real NLopt run on a quadratic bowl (its minimum 0 at (1, 2))
  restarts = [];
  for (const [k, x0] of [[0, -1.5], [1, 1.5]].entries()) {
    const outcome = await minimize({
      method: 'BOBYQA',
      lower: [-3, -3],
      upper: [3, 3],
      x0,
      objective: ([a, b]) => (a - 1) ** 2 + 3 * (b - 2) ** 2,
      maxEvaluations: 40,
    });
    // the result file's trace: scores, larger is better (NLopt minimized value = −score)
    restarts.push({ restart: k, trace: outcome.trace.map((p) => ({ evaluation: p.evaluation, score: -p.value, best_score: -p.best })) });
  }
}, 60_000);

// ---------------------------------------------------------------------------------------------

describe('the XML well-formedness check used on the SVGs', () => {
  it('accepts a well-formed document and rejects each kind of malformation', () => {
    expect(checkWellFormedXml('<?xml version="1.0"?><svg a="1" b=\'&amp;\'><g><path d="M0 0"/></g><style><![CDATA[ a < b ]]></style>x &lt; y</svg>')).toEqual({ root: 'svg', elements: 4 });
    for (const bad of [
      '<svg><g></svg>', // unclosed
      '<svg><g></h></svg>', // mismatched end tag
      '<svg a=1></svg>', // unquoted attribute
      '<svg a="1" a="2"></svg>', // duplicate attribute
      '<svg>a & b</svg>', // bare ampersand
      '<svg>&nbsp;</svg>', // entity XML does not predefine
      '<svg></svg><svg></svg>', // two roots
      '<svg a="<"></svg>', // '<' in an attribute
      'text<svg></svg>', // text outside the root
      '<svg><!-- open </svg>', // unclosed comment
    ]) {
      expect(() => checkWellFormedXml(bad), bad).toThrow(/not well-formed/);
    }
  });
});

describe('palette (CIE 1976 L*; lightness survives colour-vision deficiencies and grey print)', () => {
  it('computes L* of known colours', () => {
    // CIE 1976: L* of white is 100, of black 0; sRGB mid grey #777777 is L* 50.03 (from the sRGB curve)
    expect(lightness('#ffffff')).toBeCloseTo(100, 6);
    expect(lightness('#000000')).toBeCloseTo(0, 6);
    expect(lightness('#777777')).toBeCloseTo(50.03, 1);
  });

  it('keeps the stability classes apart in lightness', () => {
    const stableDarkest = lightness(STABILITY_COLORS.stableRamp[0]);
    const stableLightest = lightness(STABILITY_COLORS.stableRamp[1]);
    // common practice: about 10 L* units are told apart at a glance
    expect(stableLightest - stableDarkest).toBeGreaterThan(25);
    expect(lightness(STABILITY_COLORS.unstable) - stableLightest).toBeGreaterThan(10);
    expect(lightness(STABILITY_COLORS.none) - lightness(STABILITY_COLORS.unstable)).toBeGreaterThan(10);
  });

  it('keeps the basin outcomes apart, and fell at stride 0 far from the paper', () => {
    const converged = lightness(OUTCOME_COLORS.converged);
    // wandering is much lighter than converged; fell is told apart by its cross as well (common practice: ~10 L* at a glance)
    expect(lightness(OUTCOME_COLORS.wandering) - converged).toBeGreaterThan(15);
    expect(lightness(OUTCOME_COLORS.fellRamp[1]) - lightness(OUTCOME_COLORS.fellRamp[0])).toBeGreaterThan(25);
    // fell at stride 0 must not look like the background (the paper is L* 100)
    expect(lightness(PALETTE.paper) - lightness(OUTCOME_COLORS.fellRamp[0])).toBeGreaterThan(50);
    expect(lightness(PALETTE.ink)).toBeLessThan(20);
  });

  it('gives every state one colour, the same in the figures that show it', () => {
    expect(new Set(Object.values(STATE_COLORS)).size).toBe(Object.keys(STATE_COLORS).length);
    expect(STABILITY_COLORS.stableRamp[0]).toBe(STATE_COLORS.stable);
    expect(STABILITY_COLORS.unstable).toBe(STATE_COLORS.unstable);
    expect(OUTCOME_COLORS.converged).toBe(STATE_COLORS.converged);
    expect(OUTCOME_COLORS.wandering).toBe(STATE_COLORS.wandering);
    expect(OUTCOME_COLORS.fellRamp[0]).toBe(STATE_COLORS.fell);
    const stableMarker = series(returnMapFigure(map), 'fixed-points-stable') as AnySeries & { itemStyle: { color: string } };
    expect(stableMarker.itemStyle.color).toBe(STATE_COLORS.stable);
  });
});

describe('apex return map figure', () => {
  it('carries the samples, failed strides as gaps, the diagonal over the domain and the fixed points', () => {
    const option = returnMapFigure(map);
    const exact = values(series(option, 'exact-map'));
    const expected = [map.edge_probe!, ...map.samples].map((s) => [s.apex_height_m, s.next_apex_height_m]);
    expect(exact).toEqual(expected);
    // the demo map fails above its domain: those samples are gaps (null), not points
    expect(map.samples.some((s) => s.next_apex_height_m === null)).toBe(true);
    expect(exact.filter((p) => p[1] === null).length).toBe(map.samples.filter((s) => s.next_apex_height_m === null).length);

    expect(values(series(option, 'diagonal'))).toEqual([
      [map.domain.low_m, map.domain.low_m],
      [map.domain.high_m, map.domain.high_m],
    ]);
    const edges = series(option, 'domain-edges').markLine!.data.map((d) => d.xAxis);
    expect(edges).toEqual([map.domain.low_m, map.domain.high_m]);

    const stable = map.fixed_points.filter((f) => f.stable);
    const unstable = map.fixed_points.filter((f) => !f.stable);
    // the demo robot's map has one of each (as `pronk map` reports)
    expect(stable.length).toBeGreaterThan(0);
    expect(unstable.length).toBeGreaterThan(0);
    expect(values(series(option, 'fixed-points-stable'))).toEqual(stable.map((f) => [f.apex_height_m, f.apex_height_m]));
    expect(values(series(option, 'fixed-points-unstable'))).toEqual(unstable.map((f) => [f.apex_height_m, f.apex_height_m]));
    // the label gives the slope to 3 significant digits
    const label = (series(option, 'fixed-points-stable').data[0] as { name: string }).name;
    const shown = Number(/slope (\S+)/.exec(label)![1]);
    expect(Math.abs(shown - stable[0].slope)).toBeLessThanOrEqual(5e-3 * Math.abs(stable[0].slope));

    const approx = values(series(option, 'approximate-map'));
    expect(approx).toEqual(map.approximate!.samples.map((s) => [s.apex_height_m, s.next_apex_height_m]));
  });

  it('draws the staircase as a cobweb through the map and the diagonal', () => {
    const corners = cobweb(map);
    expect(values(series(returnMapFigure(map), 'staircase'))).toEqual(corners);
    expect(corners[0]).toEqual([map.staircase[0].apex_height_m, map.staircase[0].apex_height_m]);
    map.staircase.forEach((step, k) => {
      // vertical to the map, then horizontal to the diagonal
      expect(corners[2 * k + 1]).toEqual([step.apex_height_m, step.next_apex_height_m]);
      expect(corners[2 * k + 2]).toEqual([step.next_apex_height_m, step.next_apex_height_m]);
    });
  });

  it('uses one range for both axes that holds every point', () => {
    const option = returnMapFigure(map);
    const [x] = axes(option, 'xAxis');
    const [y] = axes(option, 'yAxis');
    expect([x.min, x.max]).toEqual([y.min, y.max]);
    const all = seriesOf(option).flatMap((s) => values(s)).flat().filter((v): v is number => typeof v === 'number');
    expect(Math.min(...all)).toBeGreaterThanOrEqual(x.min as number);
    expect(Math.max(...all)).toBeLessThanOrEqual(x.max as number);
  });

  it('renders to a well-formed SVG with its axis names and every series', () => {
    const svg = expectSvg(returnMapFigure(map), ['apex height y (m)', 'next apex height P(y) (m)']);
    expect(svgTexts(svg)).toContain('Apex return map');
  });
});

describe('stability regions figure', () => {
  it('puts every cell in its class with |slope| for the stable ones', () => {
    const option = stabilityRegionsFigure(scanned);
    const by = (c: string) => scanned.cells.filter((cell) => cell.class === c);
    expect(values(series(option, 'stable'))).toEqual(by('stable').map((c) => [c.x, c.y, Math.abs(c.stable_slope!), c.index]));
    expect(values(series(option, 'unstable'))).toEqual(by('unstable').map((c) => [c.x, c.y, c.fixed_points.length, c.index]));
    expect(values(series(option, 'none'))).toEqual(by('none').map((c) => [c.x, c.y, 0, c.index]));
    // this grid (the demo's attack and retraction rate) has all three classes
    expect(scanned.counts.stable * scanned.counts.unstable * scanned.counts.none).toBeGreaterThan(0);
    const [x] = axes(option, 'xAxis');
    const [y] = axes(option, 'yAxis');
    // the labels a person reads, the units from the field names
    expect(x.name).toBe('Attack angle at apex (°)');
    expect(y.name).toBe('Retraction rate (°/s)');
    // value axes over the cells' full extent (half a step beyond the first and last value)
    const dx = scanned.x.values[1] - scanned.x.values[0];
    expect(x.min).toBeCloseTo(scanned.x.values[0] - dx / 2, 12);
    expect(x.max).toBeCloseTo(scanned.x.values.at(-1)! + dx / 2, 12);
    // round ticks only: every tick a whole multiple of a 1-2-5 step
    const ticks = (x.axisLabel as { customValues: number[] }).customValues;
    const step = ticks[1] - ticks[0];
    expect(ticks.length).toBeGreaterThanOrEqual(3);
    for (const t of ticks) expect(Math.abs(t / step - Math.round(t / step))).toBeLessThan(1e-9);
    expect(String(step)).toMatch(/^(1|2|5|0\.0*[125]|[125]0*)$/);
    const visualMaps = option.visualMap as { seriesIndex: number; show?: boolean; min?: number; max?: number }[];
    const stableIndex = seriesOf(option).findIndex((s) => s.id === 'stable');
    const shown = visualMaps.find((v) => v.show !== false)!;
    expect(shown.seriesIndex).toBe(stableIndex);
    expect([shown.min, shown.max]).toEqual([0, 1]);
  });

  it('marks the current scenario\'s point', () => {
    const option = stabilityRegionsFigure(scanned, { current: { x: 66, y: 40 } });
    expect(values(series(option, 'current'))).toEqual([[66, 40]]);
    expect(seriesOf(stabilityRegionsFigure(scanned)).some((s) => s.id === 'current')).toBe(false);
  });

  it('renders to a well-formed SVG', () => {
    const svg = expectSvg(stabilityRegionsFigure(scanned, { current: { x: 66, y: 40 } }), ['Attack angle at apex (°)', 'Retraction rate (°/s)']);
    // a slash in every unstable-only cell (colour is not the only cue)
    expect((svg.match(/<path /g) ?? []).length).toBeGreaterThan(scanned.counts.unstable);
  });
});

describe('basin figure', () => {
  it('grid mode: cells by outcome at [speed index, height index], fell shaded by its stride', () => {
    const option = basinFigure(basinGrid);
    const nv = basinGrid.speeds_m_per_s.length;
    for (const outcome of ['converged', 'wandering', 'fell'] as const) {
      const expected = basinGrid.cells
        .map((cell, i) => ({ cell, i }))
        .filter(({ cell }) => cell.outcome === outcome)
        .map(({ cell, i }) => [basinGrid.speeds_m_per_s[i % nv], basinGrid.heights_m[Math.floor(i / nv)], outcome === 'fell' ? cell.failed_stride : 0, i]);
      expect(values(series(option, outcome))).toEqual(expected);
    }
    // this grid has converged and fallen cells
    expect(basinGrid.counts.converged * basinGrid.counts.fell).toBeGreaterThan(0);
    expect((option.title as { text: string }).text).toContain(`attracted fraction ${Number(basinGrid.attracted_fraction.toPrecision(3))}`);
    const [y] = axes(option, 'yAxis');
    expect(y.type).toBe('value');
    const dy = basinGrid.heights_m[1] - basinGrid.heights_m[0];
    expect(y.min).toBeCloseTo(basinGrid.heights_m[0] - dy / 2, 12);
    // round ticks with the decimals their step needs (no 0.49171 on the axis)
    const labels = (y.axisLabel as { customValues: number[]; formatter: (v: number) => string });
    for (const v of labels.customValues) expect(labels.formatter(v)).toMatch(/^\d+\.\d{1,2}$/);
  });

  it('energy mode: a strip over height', () => {
    const option = basinFigure(basinEnergy);
    const all = seriesOf(option).flatMap((s) => values(s)) as number[][];
    expect(all.length).toBe(basinEnergy.cells.length);
    expect(all.every((p) => p[1] === 0)).toBe(true);
    expect(all.map((p) => p[3]).sort((a, b) => a - b)).toEqual(basinEnergy.cells.map((_, i) => i));
    expect(all.map((p) => p[0]).sort((a, b) => a - b)).toEqual(basinEnergy.heights_m);
    expect(axes(option, 'yAxis')[0].name).toBe(`E = ${Number(basinEnergy.energy_J!.toPrecision(5))} J`);
  });

  it('marks the start apex, in either mode', () => {
    expect(values(series(basinFigure(basinGrid, { current: { apex_height_m: 0.5, forward_speed_m_per_s: 3 } }), 'current'))).toEqual([[3, 0.5]]);
    expect(values(series(basinFigure(basinEnergy, { current: { apex_height_m: 0.5 } }), 'current'))).toEqual([[0.5, 0]]);
  });

  it('renders both modes to well-formed SVGs', () => {
    expectSvg(basinFigure(basinGrid), ['Start forward speed (m/s)', 'Start apex height (m)']);
    expectSvg(basinFigure(basinEnergy), ['Start apex height (m)']);
  });
});

describe('lateral basin figure', () => {
  it('cells by outcome at [angular-velocity error, heading error], the gait marked at (0, 0)', () => {
    const option = lateralBasinFigure(lateral);
    const nr = lateral.rates_deg_per_s.length;
    for (const outcome of ['converged', 'wandering', 'fell', 'no_speed'] as const) {
      const expected = lateral.cells
        .map((cell, i) => ({ cell, i }))
        .filter(({ cell }) => cell.outcome === outcome)
        .map(({ i }) => [lateral.rates_deg_per_s[i % nr], lateral.headings_deg[Math.floor(i / nr)], 0, i]);
      expect(values(series(option, outcome))).toEqual(expected);
      expect(expected.length).toBe(lateral.counts[outcome]);
    }
    // each plotted cell is the result's own cell: its errors are the grid values it sits at
    for (const p of seriesOf(option).filter((x) => x.id !== 'current').flatMap((x) => values(x)) as number[][]) {
      expect(lateral.cells[p[3]].rate_error_deg_per_s).toBe(p[0]);
      expect(lateral.cells[p[3]].heading_error_deg).toBe(p[1]);
    }
    // this grid has converged cells and others
    expect(lateral.counts.converged).toBeGreaterThan(0);
    expect(lateral.counts.converged).toBeLessThan(lateral.cells.length);
    expect(values(series(option, 'current'))).toEqual([[0, 0]]);
    expect((option.title as { text: string }).text).toContain(`attracted fraction ${Number(lateral.attracted_fraction.toPrecision(3))}`);
  });

  it('renders to a well-formed SVG', () => {
    expectSvg(lateralBasinFigure(lateral), ['angular-velocity error at the left touchdown (deg/s)', 'heading-to-body error at the left touchdown (deg)']);
  });
});

describe('lateral stability regions figure', () => {
  it('cells by class at their parameter values, stable shaded by the largest reduced |eigenvalue|', () => {
    const option = lateralScanFigure(lateralScanned);
    for (const cls of ['stable', 'neutral', 'unstable', 'none'] as const) {
      const expected = lateralScanned.cells
        .map((cell, i) => ({ cell, i }))
        .filter(({ cell }) => cell.class === cls)
        .map(({ cell, i }) => [cell.x, cell.y, cls === 'stable' ? cell.largest_modulus : cls === 'unstable' ? cell.gaits : 0, i]);
      expect(values(series(option, cls))).toEqual(expected);
      expect(expected.length).toBe(lateralScanned.counts[cls]);
    }
    // Schmitt & Holmes 2000 (as the model's tests check it): the force through a point behind the
    // centre of mass gives a stable gait, through it a neutral one, ahead of it unstable ones only
    const column = (d: number) => lateralScanned.cells.filter((c) => c.x === d).map((c) => c.class);
    expect(column(-0.02)).toEqual(['stable', 'stable']);
    expect(column(0)).toEqual(['neutral', 'neutral']);
    expect(column(0.02)).toEqual(['unstable', 'unstable']);
  });

  it('renders to a well-formed SVG', () => {
    expectSvg(lateralScanFigure(lateralScanned), ['Leg attachment offset d (m)', 'Touchdown angle to body axis (°)']);
  });
});

describe('survival figure', () => {
  it('carries survival after each stride and its Wilson band', () => {
    const option = survivalFigure(robust);
    expect(values(series(option, 'survival'))).toEqual(robust.survival_by_stride.map((s) => [s.stride, s.survival]));
    expect(values(series(option, 'survival-band'))).toEqual(robust.survival_by_stride.map((s) => [s.stride, ...s.wilson95]));
    const subtitle = (option.title as { subtext: string }).subtext;
    expect(subtitle).toContain(`${robust.rollouts} rollouts`);
    expect(subtitle).toContain(`seed ${robust.terrain.seed}`);
    // at sigma 2 cm some rollouts fall, so the band is not flat at 1
    expect(robust.survival).toBeLessThan(1);
  });

  it('zooms the survival axis to the data, with round per-cent ticks', () => {
    const lowest = Math.min(...robust.survival_by_stride.map((s) => s.wilson95[0]));
    const [y] = axes(survivalFigure(robust), 'yAxis');
    expect(y.max).toBe(1);
    // the axis starts at a round value at most one tick below the lowest Wilson bound, not at 0
    expect(y.min as number).toBeLessThanOrEqual(lowest);
    expect(lowest - (y.min as number)).toBeLessThanOrEqual((y.interval as number) * 1.000001 + 0.08 * (1 - lowest));
    // a run where 97.9 % survive: 100 % and 97.9 % are more than a tenth of the axis apart
    const high = { ...robust, survival: 0.979, wilson95: [0.9697, 0.9853] as [number, number], survival_by_stride: robust.survival_by_stride.map((s) => ({ ...s, survival: Math.max(0.979, s.survival), wilson95: [Math.max(0.9697, s.wilson95[0]), 1] as [number, number] })) };
    const [z] = axes(survivalFigure(high), 'yAxis');
    expect((1 - 0.979) / (1 - (z.min as number))).toBeGreaterThan(0.1);
    const format = (z.axisLabel as { formatter: (v: number) => string }).formatter;
    expect(format(0.97)).toBe('97 %');
    expect(format(1)).toBe('100 %');
  });

  it('renders to a well-formed SVG with a band polygon per interval', () => {
    const svg = expectSvg(survivalFigure(robust), ['stride (0-based index; survival counted after it)', 'survival (rollouts still running)']);
    expect((svg.match(/<polygon /g) ?? []).length).toBe(robust.survival_by_stride.length - 1);
  });
});

describe('stance force figure', () => {
  it('carries the stance samples of one stride, touchdown to liftoff', () => {
    const t = run.trajectory!;
    const s = stanceSamples(t, 1);
    const option = stanceForceFigure(t, demo.body, { stride: 1, frictionLimit: 0.7 });
    expect(values(series(option, 'leg-force'))).toEqual(s.indices.map((i, k) => [s.time_s[k], t.leg_force_N[i]]));
    expect(s.indices.every((i, k) => k === s.indices.length - 1 || t.phase[i] === 'stance')).toBe(true);
    expect(s.time_s[0]).toBe(0);
    // the kernel's stride record of the same run: contact time (to 1e-12 s) and the peak force,
    // which no sample can exceed (law: a maximum bounds its samples)
    expect(s.time_s[s.time_s.length - 1]).toBeCloseTo(run.strides[1].contact_s, 12);
    expect(Math.max(...s.leg_force_N)).toBeLessThanOrEqual(run.strides[1].peak_leg_force_N * (1 + 1e-12));
    expect(Math.max(...s.leg_force_N)).toBeGreaterThan(0.95 * run.strides[1].peak_leg_force_N);
    // geometry at touchdown: the leg at the attack angle gives |Fx/Fy| = cot(attack) (closed form)
    const demand = values(series(option, 'friction-demand')) as number[][];
    expect(demand[0][1]).toBeCloseTo(1 / Math.tan((run.strides[1].attack_deg * Math.PI) / 180), 10);
    s.indices.forEach((i, k) => expect(demand[k][1]).toBe(Math.abs(t.x_m[i] - t.foot_x_m[i]) / Math.abs(t.y_m[i] - t.foot_y_m[i])));
    expect(values(series(option, 'friction-limit')).map((p) => p[1])).toEqual([0.7, 0.7]);
    expect(seriesOf(option).some((x) => x.id === 'force-limit')).toBe(false);
    // the peak-force limit beside the friction limit, on the force plot, inside its axis
    const limited = stanceForceFigure(t, demo.body, { stride: 1, frictionLimit: 0.7, forceLimit: 900 });
    const line = series(limited, 'force-limit');
    expect(values(line).map((p) => p[1])).toEqual([900, 900]);
    expect([line.xAxisIndex, line.yAxisIndex]).toEqual([0, 0]);
    expect(axes(limited, 'yAxis')[0].max as number).toBeGreaterThanOrEqual(900);
    expect(line.name).toContain('900 N');
    const y = axes(option, 'yAxis');
    const weight = demo.body.mass_kg * demo.body.gravity_m_per_s2;
    expect(y[1].max as number).toBeCloseTo((y[0].max as number) / weight, 12);
  });

  it('rejects a stride without stance samples, naming it', () => {
    expect(() => stanceForceFigure(run.trajectory!, demo.body, { stride: 99 })).toThrow(InputError);
    expect(() => stanceForceFigure(run.trajectory!, demo.body, { stride: 99 })).toThrow(/stride/);
  });

  it('renders to a well-formed SVG', () => {
    expectSvg(stanceForceFigure(run.trajectory!, demo.body, { frictionLimit: 0.7, forceLimit: 900 }), ['leg force (N)', '× body weight', 'time since touchdown (s)', '|Fx/Fy|']);
  });
});

describe('convergence figure', () => {
  it('carries best-so-far per restart from a real NLopt trace', () => {
    const option = convergenceFigure(restarts, { bestRestart: 1 });
    restarts.forEach((r) => {
      const trace = r.trace as { evaluation: number; best_score: number }[];
      expect(values(series(option, `restart-${r.restart}`))).toEqual(trace.map((p) => [p.evaluation, p.best_score]));
      // law: a running best score never decreases (larger is better)
      trace.forEach((p, k) => k === 0 || expect(p.best_score).toBeGreaterThanOrEqual(trace[k - 1].best_score));
    });
    expect(series(option, 'restart-1').name).toContain('(best)');
    expect(() => convergenceFigure([])).toThrow(InputError);
  });

  it('draws an older file\'s minimized trace (best) as the same score, −best', () => {
    const legacy = restarts.map((r) => ({
      restart: r.restart,
      trace: (r.trace as { evaluation: number; best_score: number }[]).map((p) => ({ evaluation: p.evaluation, value: -p.best_score, best: -p.best_score })),
    }));
    expect(values(series(convergenceFigure(legacy), 'restart-0'))).toEqual(values(series(convergenceFigure(restarts), 'restart-0')));
  });

  it('renders to a well-formed SVG', () => {
    expectSvg(convergenceFigure(restarts, { bestRestart: 0 }), ['evaluation', 'best score so far (larger is better)']);
  });
});

describe('policy comparison figure', () => {
  const a = () => ({ label: 'demo', robustness: robust, stepdown: steps });
  const b = () => ({ label: 'faster retraction', robustness: robustSteeper, stepdown: stepsSteeper });

  it('carries both survival curves, bands and step tolerances', () => {
    const option = policyComparisonFigure(a(), b());
    for (const [key, r] of [['a', robust], ['b', robustSteeper]] as const) {
      expect(values(series(option, `survival-${key}`))).toEqual(r.survival_by_stride.map((s) => [s.stride, s.survival]));
      expect(values(series(option, `survival-band-${key}`))).toEqual(r.survival_by_stride.map((s) => [s.stride, ...s.wilson95]));
    }
    expect(series(option, 'step-tolerance-a').data).toEqual([steps.max_step_down_m, steps.max_step_up_m]);
    expect(series(option, 'step-tolerance-b').data).toEqual([stepsSteeper.max_step_down_m, stepsSteeper.max_step_up_m]);
    expect(axes(option, 'xAxis')[1].data).toEqual(['step down', 'step up']);
    // without step results: survival only, one panel
    expect(axes(policyComparisonFigure({ label: 'a', robustness: robust }, { label: 'b', robustness: robustSteeper }), 'xAxis').length).toBe(1);
  });

  it('refuses runs on different seeds (not common random numbers), naming the field', () => {
    const other = { ...b(), robustness: { ...robustSteeper, terrain: { ...robustSteeper.terrain, seed: robustSteeper.terrain.seed + 1 } } };
    expect(() => policyComparisonFigure(a(), other)).toThrow(InputError);
    expect(() => policyComparisonFigure(a(), other)).toThrow(/b\.robustness\.terrain\.seed/);
  });

  it('renders to a well-formed SVG', () => {
    expectSvg(policyComparisonFigure(a(), b()), ['stride (0-based index)', 'survival (rollouts still running)', 'largest single step survived (mm)']);
  });
});

describe('return maps of two policies in one plot', () => {
  it('carries both maps, one diagonal and both sets of fixed points, in the states\' colours', () => {
    const other = { ...map, fixed_points: map.fixed_points.map((f) => ({ ...f, apex_height_m: f.apex_height_m + 0.01 })) };
    const option = returnMapComparisonFigure({ label: 'baseline', map }, { label: 'optimized', map: other });
    expect(values(series(option, 'map-a'))).toEqual([map.edge_probe!, ...map.samples].map((s) => [s.apex_height_m, s.next_apex_height_m]));
    expect(values(series(option, 'fixed-b'))).toEqual(other.fixed_points.map((f) => [f.apex_height_m, f.apex_height_m]));
    const colours = (series(option, 'fixed-a').data as { itemStyle: { color: string; borderColor: string } }[]).map((d, i) =>
      map.fixed_points[i].stable ? d.itemStyle.color : d.itemStyle.borderColor,
    );
    expect(colours).toEqual(map.fixed_points.map((f) => (f.stable ? STATE_COLORS.stable : STATE_COLORS.unstable)));
    const [x] = axes(option, 'xAxis');
    const [y] = axes(option, 'yAxis');
    expect([x.min, x.max]).toEqual([y.min, y.max]);
    expectSvg(option, ['apex height y (m)', 'next apex height P(y) (m)']);
  });
});

describe('layout: legends, frames and ticks', () => {
  it('packs every legend entry into rows, never a paged legend, and starts the plot below them', () => {
    const names = seriesOf(returnMapFigure(map)).map((s) => s.name);
    for (const width of [480, 700, 1280]) {
      const option = returnMapFigure(map, { frame: { width, height: 600, title: false } });
      const legends = option.legend as { type?: string; data: string[]; top: number }[];
      expect(legends.every((l) => l.type === undefined || l.type === 'plain')).toBe(true);
      expect(legends.flatMap((l) => l.data)).toEqual(names);
      const top = (option.grid as { top: number }).top;
      expect(top).toBeGreaterThan(Math.max(...legends.map((l) => l.top)) + 20);
      expect(option.title).toBeUndefined();
    }
    expect(legendRows(names, 480).length).toBeGreaterThan(legendRows(names, 1280).length);
    // a file keeps its title
    expect((returnMapFigure(map).title as { text: string }).text).toBe('Apex return map');
  });

  it('lays the stance plots out inside the frame', () => {
    for (const height of [420, 560, 800]) {
      const option = stanceForceFigure(run.trajectory!, demo.body, { frictionLimit: 0.7, forceLimit: 900, frame: { width: 700, height, title: height === 800 } });
      const [upper, lower] = option.grid as { top: number; height?: number; bottom?: number }[];
      expect(upper.top + upper.height!).toBeLessThan(lower.top - 30);
      expect(lower.top).toBeLessThan(height - lower.bottom! - 60);
    }
  });

  it('picks round ticks (1, 2 or 5 × 10^k) and the cell edges half-way between values', () => {
    // common practice for axis ticks: steps of 1, 2 or 5 times a power of ten
    const t = niceTicks(0.4035, 0.4965);
    expect(t.step).toBe(0.02);
    expect(t.decimals).toBe(2);
    expect(t.values).toEqual([0.42, 0.44, 0.46, 0.48]);
    expect(cellEdges([1, 2, 4])).toEqual([0.5, 1.5, 3, 5]);
  });
});

describe('stride scene', () => {
  it('puts body, leg and foot at the sample, the trail up to it, in a 1:1 plot', () => {
    const t = run.trajectory!;
    const stance = t.phase.indexOf('stance') + 3;
    for (const [index, view] of [[stance, {}], [5, { width: 900, height: 700 }]] as const) {
      const option = strideScene(t, index, undefined, view);
      expect(values(series(option, 'body'))).toEqual([[t.x_m[index], t.y_m[index]]]);
      expect(values(series(option, 'foot'))).toEqual([[t.foot_x_m[index], t.foot_y_m[index]]]);
      expect(values(series(option, 'leg'))).toEqual([
        [t.foot_x_m[index], t.foot_y_m[index]],
        [t.x_m[index], t.y_m[index]],
      ]);
      expect(values(series(option, 'trail')).length).toBe(index + 1);
      // 1:1 aspect: metres per pixel equal across and up (closed form of the layout)
      const width = 'width' in view ? view.width : 1280;
      const height = 'height' in view ? view.height : 800;
      const grid = option.grid as { left: number; right: number; top: number; bottom: number };
      const [x] = axes(option, 'xAxis');
      const [y] = axes(option, 'yAxis');
      const perPxX = ((x.max as number) - (x.min as number)) / (width - grid.left - grid.right);
      const perPxY = ((y.max as number) - (y.min as number)) / (height - grid.top - grid.bottom);
      expect(perPxX / perPxY).toBeCloseTo(1, 12);
      expect(t.x_m[index]).toBeGreaterThan(x.min as number);
      expect(t.x_m[index]).toBeLessThan(x.max as number);
    }
    expect(() => strideScene(t, t.time_s.length)).toThrow(/index/);
  });

  it('draws the ground a step scenario meets at every foothold', async () => {
    const raw = structuredClone(demo) as unknown as Record<string, unknown>;
    raw.terrain = { kind: 'steps', ground_heights_m: [0, -0.03, -0.03, 0.01] };
    const stepped = await simulate(parseScenario(raw), { strides: 4, traceInterval_s: 0.004 });
    const t = stepped.trajectory!;
    const ground = groundFromTrajectory(t);
    const heightAt = (x: number) => {
      // the polyline's height at x (the last vertex at or before x)
      let h = ground.height_m[0];
      ground.x_m.forEach((gx, i) => {
        if (gx <= x) h = ground.height_m[i];
      });
      return h;
    };
    const touchdowns = t.phase.map((p, i) => (p === 'stance' && (i === 0 || t.phase[i - 1] !== 'stance') ? i : -1)).filter((i) => i >= 0);
    expect(touchdowns.length).toBe(stepped.strides.length);
    touchdowns.forEach((i, k) => {
      expect(heightAt(t.foot_x_m[i])).toBe(t.foot_y_m[i]);
      // the scenario's own ground heights, met in order (the contract's steps terrain)
      expect(t.foot_y_m[i]).toBeCloseTo([0, -0.03, -0.03, 0.01][k], 12);
    });
    expectSvg(strideScene(t, touchdowns[1] + 2), ['forward position x (m)', 'height y (m)']);
  });
});

describe('figure index', () => {
  it('names every builder and picks the figure of each plottable command', () => {
    expect(Object.keys(FIGURES).sort()).toEqual(['basin', 'convergence', 'lateralBasin', 'lateralScan', 'policyComparison', 'returnMap', 'stabilityRegions', 'stanceForces', 'strideScene', 'survival']);
    const id = (o: FigureOption) => seriesOf(o).map((s) => s.id);
    expect(id(figureForCommand('map', map))).toEqual(id(returnMapFigure(map)));
    expect(id(figureForCommand('scan', scanned))).toEqual(['stable', 'unstable', 'none']);
    expect(id(figureForCommand('basin', basinGrid))).toEqual(['converged', 'wandering', 'fell']);
    // a lateral scenario's basin (its result grids heading and angular-velocity errors)
    expect(id(figureForCommand('basin', lateral))).toEqual(['converged', 'wandering', 'fell', 'no_speed', 'current']);
    expect(id(figureForCommand('scan', lateralScanned))).toEqual(['stable', 'neutral', 'unstable', 'none']);
    expect(id(figureForCommand('robustness', robust))).toEqual(['survival-band', 'survival']);
    expect(() => figureForCommand('simulate', {})).toThrow(InputError);
  });

  it('builds options that survive a JSON round trip in their data (plain numbers, no NaN)', () => {
    for (const option of [returnMapFigure(map), stabilityRegionsFigure(scanned), basinFigure(basinGrid), survivalFigure(robust)]) {
      for (const s of seriesOf(option)) expect(JSON.parse(JSON.stringify(s.data))).toEqual(s.data);
    }
  });
});

// ---------------------------------------------------------------------------------------------
// The CLI (the build in dist/, as `npm test` makes it).

describe('pronk ... --plot FILE.svg', () => {
  let dir: string;
  beforeAll(() => {
    dir = mkdtempSync(join(tmpdir(), 'pronk-figures-'));
  });
  afterAll(() => rmSync(dir, { recursive: true, force: true }));

  const pronk = (...args: string[]) => spawnSync(process.execPath, ['bin/pronk.js', ...args], { encoding: 'utf8', cwd: process.cwd() });

  it.each([
    ['map', ['--samples', '21', '--iterations', '5'], 'apex height y (m)'],
    ['basin', ['--heights', '0.42:0.6:4', '--speeds', '2.5:4:4', '--strides', '5', '--workers', '1'], 'Start forward speed (m/s)'],
    ['robustness', ['--sigma', '0.01', '--rollouts', '20', '--strides', '5', '--workers', '1'], 'survival (rollouts still running)'],
    ['scan', ['--x', 'policy.angle.attack_at_apex_deg:62:68:3', '--y', 'policy.angle.rate_deg_per_s:0:60:2', '--samples', '21', '--workers', '1'], 'Retraction rate (°/s)'],
  ])('%s writes an SVG figure and says where', (command, args, axisName) => {
    const file = join(dir, `${command}.svg`);
    const r = pronk(command, ...args, '--json', '--plot', file);
    expect(r.status, r.stderr).toBe(0);
    expect(() => JSON.parse(r.stdout)).not.toThrow();
    expect(r.stderr).toContain(`figure written to ${file}`);
    const svg = readFileSync(file, 'utf8');
    expect(checkWellFormedXml(svg).root).toBe('svg');
    expect(svgTexts(svg)).toContain(axisName);
  });

  it('basin on a lateral scenario writes its figure, one machine or merged from shards', () => {
    const args = ['scenarios/demo-hexapod.json', '--headings=-20:20:3', '--rates=-40:40:3', '--strides', '10'];
    const file = join(dir, 'lateral-basin.svg');
    const r = pronk('basin', ...args, '--json', '--plot', file);
    expect(r.status, r.stderr).toBe(0);
    expect(JSON.parse(r.stdout).headings_deg).toEqual([-20, 0, 20]);
    expect(r.stderr).toContain(`figure written to ${file}`);
    const svg = readFileSync(file, 'utf8');
    expect(checkWellFormedXml(svg).root).toBe('svg');
    expect(svgTexts(svg)).toContain('heading-to-body error at the left touchdown (deg)');
    for (const k of [1, 2]) expect(pronk('basin', ...args, '--shard', `${k}/2`, '--out', join(dir, `lateral-part${k}.json`)).status).toBe(0);
    const merged = join(dir, 'lateral-merged.svg');
    const m = pronk('merge', join(dir, 'lateral-part1.json'), join(dir, 'lateral-part2.json'), '--json', '--plot', merged);
    expect(m.status, m.stderr).toBe(0);
    // the merged figure is the one-machine run's, byte for byte (the same result drawn)
    expect(readFileSync(merged, 'utf8')).toBe(svg);
  });

  it('scan on a lateral scenario writes its figure', () => {
    const file = join(dir, 'lateral-scan.svg');
    const r = pronk('scan', 'scenarios/demo-hexapod.json', '--x', 'body.attachment_offset_m:-0.02:0.02:3', '--y', 'policy.angle.angle_to_body_deg:55:75:2', '--json', '--plot', file);
    expect(r.status, r.stderr).toBe(0);
    expect(JSON.parse(r.stdout).counts).toEqual({ none: 0, unstable: 2, neutral: 2, stable: 2 });
    const svg = readFileSync(file, 'utf8');
    expect(checkWellFormedXml(svg).root).toBe('svg');
    expect(svgTexts(svg)).toContain('Leg attachment offset d (m)');
  });

  it('merge --plot draws the merged result', () => {
    const args = ['--heights', '0.42:0.6:3', '--speeds', '2.5:4:3', '--strides', '5', '--workers', '1'];
    for (const k of [1, 2]) expect(pronk('basin', ...args, '--shard', `${k}/2`, '--out', join(dir, `part${k}.json`)).status).toBe(0);
    const file = join(dir, 'merged.svg');
    const r = pronk('merge', join(dir, 'part1.json'), join(dir, 'part2.json'), '--json', '--plot', file);
    expect(r.status, r.stderr).toBe(0);
    expect(svgTexts(readFileSync(file, 'utf8'))).toContain('Start apex height (m)');
  });

  it.each([
    ['not an .svg name', ['map', '--plot', 'figure.png'], /--plot: expected a file name ending in \.svg/],
    ['a missing directory', ['map', '--plot', '/nonexistent-pronk-dir/figure.svg'], /--plot: cannot write .*no such directory/],
    ['a directory', ['map', '--plot', '__DIR__.svg'], /--plot: cannot write .*it is a directory/],
    ['no value', ['map', '--plot'], /--plot needs a value/],
    ['with --shard', ['robustness', '--sigma', '0.01', '--shard', '1/2', '--plot', 'x.svg'], /--plot: expected no --plot with --shard/],
    ['with --shard (basin)', ['basin', '--shard', '1/2', '--plot', 'x.svg'], /--plot: expected no --plot with --shard/],
  ])('exits 2 naming --plot for %s', (_, args, message) => {
    const fixed = args.map((a) => (a === '__DIR__.svg' ? join(dir, 'sub.svg') : a));
    if (args.includes('__DIR__.svg')) mkdirSync(join(dir, 'sub.svg'), { recursive: true });
    const r = pronk(...fixed);
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(message);
    expect(r.stderr).not.toMatch(/\n\s+at /);
    expect(existsSync('x.svg')).toBe(false);
  });
});
