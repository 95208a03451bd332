// `scan`: the return map's fixed-point analysis over a grid of two scenario parameters, as a
// stability-region map. Every cell is the scenario with that cell's two values, and its 1-D apex
// map is taken at that cell's own start energy (an axis over the start apex, the speed, the mass or
// gravity changes it), exactly as `map` takes it for that scenario (ground flat at 0): `none` (no fixed point), `unstable` (fixed points, none
// with |slope| < 1) or `stable` (at least one with |slope| < 1, reported with its height and
// slope).
//
// Every stage runs all cells in one batch (each rollout picks its cell's model via I_MODEL):
// one call for the samples of every map, one per Brent iteration for the brackets of all cells,
// one for the slopes. A cell's numbers depend only on that cell, so any contiguous range of cells
// (a shard, `--shard i/n`) gives exactly the rows a one-machine run gives for it, and
// finishScan(rows of all shards in order) is the one-machine result bit for bit.

import * as L from '../../../assembly/layout.js';
import { decimalDigits, decimalNumber } from '../decimal.js';
import { InputError, closestName, describeFound } from '../errors.js';
import { PARTIAL_FORMAT, PARTIAL_FORMAT_VERSION, shardRange, type PartialResult, type ShardSpec } from '../shard.js';
import { SAFETY_CAUTION } from '../safety.js';
import { parseScenario, type Scenario } from '../scenario.js';
import { type BipedScenario, isBiped, sectionEnergy, startState } from '../models/biped.js';
import { bipedReturnMap } from './biped-map.js';
import { PRONK_VERSION, contentHash } from '../version.js';
import {
  DEFAULT_MAP_SAMPLES,
  conservesEnergy,
  findFixedPoints,
  heightStep,
  highestSurvivingSample,
  inProcessRunner,
  kernelEvaluator,
  mapCell,
  mapModel,
  mapSlopes,
  sampleMaps,
  speedAt,
  startEnergy,
  type BatchRunner,
} from './return-map.js';

export interface ScanAxis {
  /** Dotted path of a numeric field of the scenario, e.g. policy.angle.attack_deg. */
  path: string;
  lo: number;
  hi: number;
  /** Grid points, >= 1 (lo = hi when 1). */
  n: number;
}

/** Everything that defines a scan's list of cells (what every shard of one run must agree on). */
export interface ScanOptions {
  x: ScanAxis;
  y: ScanAxis;
  /** Samples of each cell's map (default 201). */
  samples: number;
}

export type ScanClass = 'none' | 'unstable' | 'stable';

export interface ScanFixedPoint {
  apex_height_m: number;
  forward_speed_m_per_s: number;
  /** The 1-D map's slope (single-leg model); null for the two-leg model, classified by its eigenvalues. */
  slope: number | null;
  slope_error: number | null;
  stable: boolean;
  /** Two-leg model: the largest |eigenvalue| of the reduced section map (stable when < 1). */
  spectral_radius?: number;
  /** Two-leg model walking: body x minus stance foot x at the fixed point, m. */
  offset_m?: number;
}

/** One cell of the grid: cells[iy * nx + ix] (row-major, y outer). */
export interface ScanCell {
  index: number;
  ix: number;
  iy: number;
  x: number;
  y: number;
  /** This cell's start energy, J: the energy its map is taken at (E = m g y0 + m v0² / 2 of the cell's scenario). */
  energy_J: number;
  class: ScanClass;
  /** The lowest stable fixed point's height and slope, or null. */
  stable_apex_height_m: number | null;
  stable_slope: number | null;
  /** Two-leg model: the stable fixed point's largest |eigenvalue| (null when none). */
  stable_spectral_radius?: number | null;
  fixed_points: ScanFixedPoint[];
  energy_conserving: boolean;
  /** No sampled stride survived at this energy. */
  domain_empty: boolean;
  /** P(y) = y everywhere within the integrator's accuracy (e.g. a vertical leg). */
  identity_map: boolean;
}

export interface ScanResult {
  /** The base scenario's start energy, J; each cell's own is its energy_J. */
  energy_J: number;
  /** The smallest and largest start energy over the cells, J. */
  cell_energy_range_J: [number, number];
  ground_height_m: 0;
  scenario_sha256: string;
  x: { path: string; values: number[] };
  y: { path: string; values: number[] };
  order: string;
  samples: number;
  cells: ScanCell[];
  counts: { none: number; unstable: number; stable: number };
  stability_note: string;
  caution: string;
}

export const MAX_SCAN_CELLS = 1_000_000;
export const MAX_SCAN_SAMPLES = 100_000;

// ---------------------------------------------------------------------------------------------
// Options: PATH:lo:hi:n, paths into the scenario.

/** Parses `PATH:lo:hi:n` given for `option` (--x or --y); checks the range and count. */
export function parseAxisOption(text: string, option: string): ScanAxis {
  const expected = 'PATH:lo:hi:n, e.g. policy.angle.attack_deg:60:80:21 (lo <= hi, n an integer >= 1)';
  const bad = (why: string) => new InputError([{ path: option, expected: `${expected}${why ? `; ${why}` : ''}`, found: describeFound(text) }]);
  const parts = text.split(':');
  if (parts.length !== 4) throw bad('');
  const [pathText, loText, hiText, nText] = parts;
  const path = pathText.trim();
  const lo = decimalNumber(loText);
  const hi = decimalNumber(hiText);
  const n = decimalDigits(nText);
  if (path === '') throw bad('the PATH is empty');
  if (!Number.isFinite(lo) || !Number.isFinite(hi)) throw bad('lo and hi must be finite numbers written in decimal (e.g. 0.25, -3 or 1e-3)');
  if (!Number.isSafeInteger(n) || n < 1) throw bad(`n must be an integer >= 1 in decimal digits (found ${nText ? JSON.stringify(nText) : 'nothing'})`);
  if (lo > hi) throw bad(`lo (${lo}) is above hi (${hi})`);
  if (n > 1 && lo === hi) throw bad(`lo equals hi (${lo}) with n = ${n}: use n = 1 for a single value`);
  return { path, lo, hi, n };
}

// `a.b[0]` and `a.b.0` name the same field.
function samePath(a: string, b: string): boolean {
  const sa = pathSegments(a);
  const sb = pathSegments(b);
  if (sa === null || sb === null) return a === b;
  return sa.length === sb.length && sa.every((segment, i) => segment === sb[i]);
}

/** The grid values of an axis: n points from lo to hi, ends exact. */
export function axisValues(axis: ScanAxis): number[] {
  if (axis.n === 1) return [axis.lo];
  return Array.from({ length: axis.n }, (_, i) => (i === axis.n - 1 ? axis.hi : axis.lo + ((axis.hi - axis.lo) * i) / (axis.n - 1)));
}

type Segment = string | number;

// `policy.angle.attack_deg`, `terrain.ground_heights_m[0]` (or `.0`) -> its segments; null if malformed.
function pathSegments(path: string): Segment[] | null {
  const segments: Segment[] = [];
  for (const part of path.split('.')) {
    if (/^\d+$/.test(part)) {
      segments.push(Number(part));
      continue;
    }
    const m = /^([A-Za-z_$][\w$]*)((?:\[\d+\])*)$/.exec(part);
    if (!m) return null;
    segments.push(m[1]);
    for (const index of m[2].matchAll(/\[(\d+)\]/g)) segments.push(Number(index[1]));
  }
  return segments;
}

// Own properties only, so that a PATH cannot reach into prototypes.
function valueAt(root: unknown, segments: readonly Segment[]): unknown {
  let node = root;
  for (const s of segments) {
    if (node === null || typeof node !== 'object' || !Object.hasOwn(node, s)) return undefined;
    node = (node as Record<string | number, unknown>)[s];
  }
  return node;
}

function numericPaths(root: unknown, prefix = ''): string[] {
  if (typeof root === 'number') return [prefix];
  if (root === null || typeof root !== 'object') return [];
  if (Array.isArray(root)) return root.flatMap((v, i) => numericPaths(v, `${prefix}[${i}]`));
  return Object.entries(root).flatMap(([k, v]) => numericPaths(v, prefix ? `${prefix}.${k}` : k));
}

/** Checks that an axis' PATH names a numeric field of the (defaults-filled) scenario. */
export function checkAxisPath(scenario: Scenario, axis: ScanAxis, option: string): Segment[] {
  const segments = pathSegments(axis.path);
  const found = segments ? valueAt(scenario, segments) : undefined;
  if (typeof found === 'number') return segments!;
  const numeric = numericPaths(scenario);
  const listed = numeric.length > 12 ? `${numeric.slice(0, 12).join(', ')}, ...` : numeric.join(', ');
  const suggestion = found === undefined ? closestName(axis.path, numeric) : undefined;
  throw new InputError([
    {
      path: option,
      expected: `a PATH to a numeric field of the scenario (e.g. ${listed})`,
      found:
        found === undefined
          ? `${JSON.stringify(axis.path)}, which is not in the scenario${suggestion ? ` (did you mean ${suggestion}?)` : ''}`
          : `${JSON.stringify(axis.path)}, which holds ${describeFound(found)}`,
    },
  ]);
}

/** Options as given (CLI or a partial result's `options`), checked and put in canonical form. */
export function normalizeScanOptions(options: unknown): ScanOptions {
  const o = (options ?? {}) as Record<string, unknown>;
  const axis = (value: unknown, option: string): ScanAxis => {
    if (typeof value === 'string') return parseAxisOption(value, option);
    const a = (value ?? {}) as Record<string, unknown>;
    if (typeof a.path !== 'string' || typeof a.lo !== 'number' || typeof a.hi !== 'number' || typeof a.n !== 'number') {
      throw new InputError([{ path: option, expected: 'an axis PATH:lo:hi:n', found: describeFound(value) }]);
    }
    return parseAxisOption(`${a.path}:${a.lo}:${a.hi}:${a.n}`, option);
  };
  const x = axis(o.x, '--x');
  const y = axis(o.y, '--y');
  if (samePath(x.path, y.path)) {
    throw new InputError([
      {
        path: '--y',
        expected: `a PATH other than --x's (${x.path}): the two axes must vary two different fields`,
        found: describeFound(y.path),
      },
    ]);
  }
  const samples = o.samples === undefined ? DEFAULT_MAP_SAMPLES : o.samples;
  if (typeof samples !== 'number' || !Number.isInteger(samples) || samples < 2 || samples > MAX_SCAN_SAMPLES) {
    throw new InputError([{ path: '--samples', expected: `an integer from 2 to ${MAX_SCAN_SAMPLES}`, found: describeFound(samples) }]);
  }
  if (x.n * y.n > MAX_SCAN_CELLS) {
    throw new InputError([{ path: '--x, --y', expected: `at most ${MAX_SCAN_CELLS} cells in all`, found: `${x.n} x ${y.n} = ${x.n * y.n}` }]);
  }
  return { x: { ...x }, y: { ...y }, samples };
}

// ---------------------------------------------------------------------------------------------
// The grid of cell scenarios.

interface ScanGrid {
  options: ScanOptions;
  xValues: number[];
  yValues: number[];
  /** Validated scenario of every cell, row-major with y outer. */
  scenarios: Scenario[];
}

function setAt(root: unknown, segments: readonly Segment[], value: number): void {
  let node = root as Record<string | number, unknown>;
  for (const s of segments.slice(0, -1)) node = node[s] as Record<string | number, unknown>;
  node[segments[segments.length - 1]] = value;
}

function buildGrid(scenario: Scenario, options: ScanOptions): ScanGrid {
  const xs = checkAxisPath(scenario, options.x, '--x');
  const ys = checkAxisPath(scenario, options.y, '--y');
  const xValues = axisValues(options.x);
  const yValues = axisValues(options.y);
  const scenarios: Scenario[] = [];
  for (const yv of yValues) {
    for (const xv of xValues) {
      const raw = structuredClone(scenario) as unknown;
      setAt(raw, xs, xv);
      setAt(raw, ys, yv);
      try {
        scenarios.push(parseScenario(raw));
      } catch (error) {
        if (!(error instanceof InputError)) throw error;
        // blame the option whose value alone breaks the scenario (a cross-field rule may be the one hit)
        const alone = (segments: readonly Segment[], value: number) => {
          const one = structuredClone(scenario) as unknown;
          setAt(one, segments, value);
          try {
            parseScenario(one);
            return true;
          } catch {
            return false;
          }
        };
        const option = !alone(xs, xv) ? '--x' : !alone(ys, yv) ? '--y' : '--x, --y';
        throw new InputError([
          {
            path: option,
            expected: 'values that keep the scenario valid in every cell',
            found: `${options.x.path} = ${xv}, ${options.y.path} = ${yv}, where ${error.format().split('\n')[0]}`,
          },
        ]);
      }
    }
  }
  return { options, xValues, yValues, scenarios };
}

// ---------------------------------------------------------------------------------------------
// Running cells.

/** The rows of cells [start, end) of the grid (all stages batched over those cells). */
async function scanRows(grid: ScanGrid, start: number, end: number, runBatch: BatchRunner): Promise<ScanCell[]> {
  const chosen = grid.scenarios.slice(start, end);
  if (chosen.length === 0) return [];
  if (chosen.some(isBiped)) return bipedScanRows(grid, start, chosen as BipedScenario[], runBatch);
  // each cell at its own start energy, as `map` takes the cell's scenario
  const cells = chosen.map((s) => mapCell(s, startEnergy(s)));
  const evaluate = kernelEvaluator(chosen.map(mapModel), runBatch);
  const sampled = await sampleMaps(cells, grid.options.samples, evaluate);
  const roots = await findFixedPoints(cells, sampled, evaluate);
  const requests = roots.flatMap((r, cell) => {
    const top = highestSurvivingSample(sampled[cell]);
    return r.roots.map((root) => ({ cell, y: root.y, h0: heightStep(cells[cell], root.y, top) }));
  });
  const slopes = await mapSlopes(cells, requests, evaluate);
  let at = 0;
  const nx = grid.xValues.length;
  return chosen.map((scenario, i) => {
    const index = start + i;
    const fixedPoints: ScanFixedPoint[] = [];
    for (const root of roots[i].roots) {
      const d = slopes[at++];
      if (!d) continue;
      fixedPoints.push({
        apex_height_m: root.y,
        forward_speed_m_per_s: speedAt(cells[i], root.y),
        slope: d.value,
        slope_error: d.error,
        stable: Math.abs(d.value) < 1,
      });
    }
    const stable = fixedPoints.find((f) => f.stable);
    const ix = index % nx;
    const iy = Math.floor(index / nx);
    return {
      index,
      ix,
      iy,
      x: grid.xValues[ix],
      y: grid.yValues[iy],
      energy_J: cells[i].energy_J,
      class: stable ? 'stable' : fixedPoints.length ? 'unstable' : 'none',
      stable_apex_height_m: stable ? stable.apex_height_m : null,
      stable_slope: stable ? stable.slope : null,
      fixed_points: fixedPoints,
      energy_conserving: conservesEnergy(scenario),
      domain_empty: ![sampled[i].probe, ...sampled[i].samples].some((p) => p?.outcome.status === L.STATUS_OK),
      identity_map: roots[i].identity,
    };
  });
}

// The two-leg model: each cell's section map (`map`'s analysis: every fixed point, classified by
// all eigenvalues of the reduced map) at the cell's own start energy, one cell after another.
async function bipedScanRows(grid: ScanGrid, start: number, chosen: BipedScenario[], runBatch: BatchRunner): Promise<ScanCell[]> {
  const nx = grid.xValues.length;
  const rows: ScanCell[] = [];
  for (let i = 0; i < chosen.length; i++) {
    const scenario = chosen[i];
    const map = await bipedReturnMap(scenario, { samples: grid.options.samples, iterations: 0, runBatch });
    const fixedPoints: ScanFixedPoint[] = map.fixed_points.map((f) => ({
      apex_height_m: f.height_m,
      forward_speed_m_per_s: f.speed_m_per_s,
      slope: null,
      slope_error: null,
      stable: f.stable,
      spectral_radius: f.eigenvalues.length ? f.eigenvalues[0].modulus : Number.NaN,
      offset_m: f.offset_m,
    }));
    const stable = fixedPoints.find((f) => f.stable);
    const index = start + i;
    const ix = index % nx;
    const iy = Math.floor(index / nx);
    rows.push({
      index,
      ix,
      iy,
      x: grid.xValues[ix],
      y: grid.yValues[iy],
      energy_J: map.energy_J,
      class: stable ? 'stable' : fixedPoints.length ? 'unstable' : 'none',
      stable_apex_height_m: stable ? stable.apex_height_m : null,
      stable_slope: null,
      stable_spectral_radius: stable ? (stable.spectral_radius ?? null) : null,
      fixed_points: fixedPoints,
      energy_conserving: conservesEnergy(scenario),
      domain_empty: !map.scan.some((x) => x.next_height_m !== null),
      identity_map: false,
    });
  }
  return rows;
}

export interface ScanRunOptions {
  /** How batches run (default: in-process engine; the CLI passes the worker pool). */
  runBatch?: BatchRunner;
}

/** The whole scan on one machine. */
export async function scan(scenario: Scenario, options: ScanOptions, run: ScanRunOptions = {}): Promise<ScanResult> {
  const normalized = normalizeScanOptions(options);
  const grid = buildGrid(scenario, normalized);
  const rows = await scanRows(grid, 0, grid.scenarios.length, run.runBatch ?? inProcessRunner);
  return finishScan(scenario, normalized, rows);
}

/** One shard (`--shard i/n`): the rows of a contiguous range of cells, as a partial result. */
export async function scanShard(scenario: Scenario, options: ScanOptions, shard: ShardSpec, run: ScanRunOptions = {}): Promise<PartialResult<ScanCell>> {
  const normalized = normalizeScanOptions(options);
  const grid = buildGrid(scenario, normalized);
  const total = grid.scenarios.length;
  const range = shardRange(total, shard);
  const rows = await scanRows(grid, range.start, range.end, run.runBatch ?? inProcessRunner);
  return {
    format: PARTIAL_FORMAT,
    format_version: PARTIAL_FORMAT_VERSION,
    command: 'scan',
    pronk_version: PRONK_VERSION,
    scenario_sha256: await contentHash(scenario),
    scenario,
    options: { ...normalized } as unknown as Record<string, unknown>,
    shard: { index: shard.index, count: shard.count, start: range.start, end: range.end, total },
    rows,
  };
}

// Every field of a cell as a run writes it, so that a row edited in a partial result is refused
// rather than printed (a stable apex of "NaN" was merged as it stood).
const SCAN_CLASSES = new Set<unknown>(['none', 'unstable', 'stable']);
function isScanCell(value: unknown, index: number, xValues: readonly number[], yValues: readonly number[]): value is ScanCell {
  const nx = xValues.length;
  if (typeof value !== 'object' || value === null || Array.isArray(value)) return false;
  const row = value as Record<string, unknown>;
  const finite = (x: unknown) => typeof x === 'number' && Number.isFinite(x);
  const finiteOrNull = (x: unknown) => x === null || finite(x);
  const isBoolean = (x: unknown) => typeof x === 'boolean';
  const fixedPointsOk =
    Array.isArray(row.fixed_points) &&
    row.fixed_points.every((point: unknown) => {
      if (typeof point !== 'object' || point === null) return false;
      const p = point as Record<string, unknown>;
      // a two-leg cell's fixed point has a spectral radius and an offset instead of a slope
      const spectral = p.spectral_radius !== undefined;
      const measure = spectral
        ? p.slope === null && p.slope_error === null && finite(p.spectral_radius) && finite(p.offset_m)
        : finite(p.slope) && finite(p.slope_error);
      return finite(p.apex_height_m) && finite(p.forward_speed_m_per_s) && measure && isBoolean(p.stable);
    });
  const spectralOk = row.stable_spectral_radius === undefined || finiteOrNull(row.stable_spectral_radius);
  const stableMeasure = row.stable_spectral_radius === undefined ? row.stable_slope : row.stable_spectral_radius;
  return (
    row.index === index &&
    row.ix === index % nx &&
    row.iy === Math.floor(index / nx) &&
    row.x === xValues[index % nx] &&
    row.y === yValues[Math.floor(index / nx)] &&
    finite(row.energy_J) &&
    SCAN_CLASSES.has(row.class) &&
    finiteOrNull(row.stable_apex_height_m) &&
    finiteOrNull(row.stable_slope) &&
    spectralOk &&
    (row.stable_apex_height_m === null) === (stableMeasure === null) &&
    fixedPointsOk &&
    isBoolean(row.energy_conserving) &&
    isBoolean(row.domain_empty) &&
    isBoolean(row.identity_map)
  );
}

/**
 * The scan result from all rows (one machine's, or every shard's joined in order): exactly what
 * `pronk scan --json` prints. `scenario` and `options` may come straight from a partial result.
 */
export async function finishScan(scenario: unknown, options: unknown, rowsGiven: readonly unknown[]): Promise<ScanResult> {
  const validated = parseScenario(scenario);
  const normalized = normalizeScanOptions(options);
  const xValues = axisValues(normalized.x);
  const yValues = axisValues(normalized.y);
  const total = xValues.length * yValues.length;
  const rows = rowsGiven as readonly ScanCell[];
  const bad = rows.findIndex((row, i) => !isScanCell(row, i, xValues, yValues));
  if (rows.length !== total || bad >= 0) {
    throw new InputError([
      {
        path: 'rows',
        expected: `${total} scan cells with indices 0 to ${total - 1} in order`,
        found: rows.length !== total ? `${rows.length} rows` : `row ${bad}: ${describeFound(rows[bad])}`,
      },
    ]);
  }
  const counts = { none: 0, unstable: 0, stable: 0 };
  for (const row of rows) counts[row.class]++;
  const conservative = rows.every((row) => row.energy_conserving);
  let lowest = Infinity;
  let highest = -Infinity;
  for (const row of rows) {
    lowest = Math.min(lowest, row.energy_J);
    highest = Math.max(highest, row.energy_J);
  }
  return {
    energy_J: isBiped(validated) ? sectionEnergy(validated, startState(validated)) : startEnergy(validated),
    cell_energy_range_J: [lowest, highest],
    ground_height_m: 0,
    scenario_sha256: await contentHash(validated),
    x: { path: normalized.x.path, values: xValues },
    y: { path: normalized.y.path, values: yValues },
    order: 'row-major, y outer: cells[iy * x.values.length + ix]',
    samples: normalized.samples,
    cells: rows.map((row) => ({ ...row })),
    counts,
    stability_note: isBiped(validated)
      ? "each cell's section map reduced by energy (the two-leg model: walking (height, offset), running (height)) at that cell's own start energy on flat ground at 0" +
        (lowest === highest ? ' (the same in every cell)' : ` (from ${lowest} to ${highest} J over the cells)`) +
        '; stable means every eigenvalue of the reduced map inside the unit circle (spectral_radius < 1)'
      : "each cell's 1-D apex map at that cell's own start energy on flat ground at 0" +
      (lowest === highest ? ' (the same in every cell)' : ` (from ${lowest} to ${highest} J over the cells)`) +
      "; stable means |P'(y*)| < 1" +
      (conservative ? '' : "; some cells change energy in stance, where this is the 1-D map's stability, not a periodic orbit's"),
    caution: SAFETY_CAUTION,
  };
}
