// One export: the source's policy sampled on its grid (sample.ts), rounded to the float32 tables
// the C runs, checked, measured and checksummed. The three writers (c99.ts, json.ts, csv.ts)
// only format a PolicyExport.
//
// Refusals: a table point that is NaN or infinite (in float64, or once rounded to float32), or a
// constraint of the result file with a negative margin. Without `force` these throw an
// InputError naming each; with it the export goes ahead and every written file says so.

import { InputError, type InputIssue } from '../errors.js';
import { SAFETY_CAUTION } from '../safety.js';
import { PRONK_VERSION } from '../version.js';
import type { ExportSource } from './input.js';
import { crc32Float32, type Float32Table } from './lookup.js';
import {
  checkTimes,
  chooseGrid,
  defaultTimeRange,
  float32Error,
  float64Error,
  tableSpecs,
  type ChosenGrid,
  type GridMode,
  type GridOptionNames,
  type GridRequest,
  type InterpolationError,
  type TableSpec,
  type TimeRange,
} from './sample.js';

/** The caution every written file carries: the project's, plus what to do before hardware. */
export const EXPORT_CAUTION =
  `${SAFETY_CAUTION} Before this table runs a machine: validate it in simulation with margins, ` +
  'then test it tethered, with an emergency stop within reach and current limits set.';

/** Smallest and largest t_max accepted, s. */
export const T_MAX_RANGE_S: [number, number] = [1e-4, 60];

export interface ExportOptions {
  /** Evenly spaced points, or an error bound; default: 2 points (with the breakpoints: exact). */
  grid?: GridRequest;
  /** 'breakpoints' (default): the policy's breakpoints are grid points too; 'uniform': evenly spaced only. */
  mode?: GridMode;
  /** Overrides the end of the time axis, s. */
  t_max_s?: number;
  /** Write despite refusals, and say so in the files. */
  force?: boolean;
  /** When the export is made (default now). */
  date?: Date;
  /** Option names for messages (the CLI passes its flags). */
  names?: GridOptionNames & { t_max: string };
}

export interface TableReport {
  name: TableSpec['name'];
  column: TableSpec['column'];
  unit: TableSpec['unit'];
  /** The float64 table against the continuous policy. */
  float64_error: InterpolationError;
  /** The float32 lookup (as the C runs it) against the continuous policy, at float32 times. */
  float32_error: InterpolationError;
}

export interface PolicyExport {
  source: ExportSource;
  /** The scenario's name, or a stand-in. */
  name: string;
  specs: TableSpec[];
  grid: ChosenGrid;
  /** (points) float32 time axis and one float32 table per spec, in C units (rad, N/m). */
  float32: { axis: Float32Array; tables: Float32Array[] };
  /** CRC-32 of the little-endian float32 bytes of the axis, then each table in order. */
  crc32: number;
  crc32_covers: string;
  tables: TableReport[];
  /** Why the export would be refused (empty when it is clean). */
  problems: string[];
  forced: boolean;
  exported: { pronk_version: string; date: string };
  caution: string;
}

const show = (x: number) => (Number.isFinite(x) ? String(Number(x.toPrecision(6))) : String(x));

function constraintProblems(source: ExportSource): string[] {
  return (source.constraints ?? [])
    .filter((c) => c.margin < 0)
    .map((c) => `constraint ${JSON.stringify(c.name)} is violated: value ${show(c.value)}, limit ${show(c.limit)}, margin ${show(c.margin)} (a negative margin)`);
}

function tableProblems(specs: readonly TableSpec[], grid: ChosenGrid, float32: PolicyExport['float32']): string[] {
  const problems: string[] = [];
  const times = grid.axes[0].points;
  specs.forEach((spec, i) => {
    grid.values[i].forEach((v, j) => {
      const where = `${spec.name} table point ${j} (t = ${show(times[j])} s)`;
      if (!Number.isFinite(v)) problems.push(`${where} is ${v}`);
      else if (!Number.isFinite(float32.tables[i][j])) {
        problems.push(`${where} is ${float32.tables[i][j]} in float32 (${show(v)} ${spec.unit} is beyond the float32 range)`);
      }
    });
  });
  return problems;
}

const MAX_PROBLEMS_SHOWN = 20;

/** Samples, rounds, checks and measures the source's policy; throws on a refusal unless forced. */
export function buildExport(source: ExportSource, options: ExportOptions = {}): PolicyExport {
  const names = options.names ?? { points: 'points', max_error: 'max_error', max_stiffness_error: 'max_stiffness_error', t_max: 't_max_s' };
  const { scenario, policy } = source;
  let range: TimeRange;
  if (options.t_max_s !== undefined) {
    const t = options.t_max_s;
    if (!(Number.isFinite(t) && t >= T_MAX_RANGE_S[0] && t <= T_MAX_RANGE_S[1])) {
      throw new InputError([{ path: names.t_max, expected: `a time from ${T_MAX_RANGE_S[0]} to ${T_MAX_RANGE_S[1]} s`, found: String(t) }]);
    }
    range = { t_max_s: t, source: 'set by the user' };
  } else {
    range = defaultTimeRange(scenario, policy);
  }
  const specs = tableSpecs(scenario, policy);
  const grid = chooseGrid(specs, policy, range, options.mode ?? 'breakpoints', options.grid ?? { by: 'points', points: 2 }, names);
  const axis = grid.axes[0];
  const float32 = {
    axis: Float32Array.from(axis.points),
    tables: specs.map((spec, i) => Float32Array.from(grid.values[i], (v) => spec.toFloat32(v))),
  };
  const problems = [...constraintProblems(source), ...tableProblems(specs, grid, float32)];
  const forced = problems.length > 0;
  if (forced && !options.force) {
    const shown = problems.slice(0, MAX_PROBLEMS_SHOWN);
    if (problems.length > shown.length) shown.push(`... and ${problems.length - shown.length} more`);
    const issues: InputIssue[] = shown.map((message) => ({ path: '', expected: '', found: '', message }));
    issues.push({ path: '', expected: '', found: '', message: 'nothing written (--force writes anyway and marks every file as forced)' });
    throw new InputError(issues, { source: source.file });
  }
  const times = checkTimes(axis, grid.breakpoints);
  const tables = specs.map((spec, i): TableReport => {
    const table: Float32Table = { axis: float32.axis, values: float32.tables[i] };
    return {
      name: spec.name,
      column: spec.column,
      unit: spec.unit,
      float64_error: float64Error(spec, axis, grid.values[i], times),
      float32_error: float32Error(spec, table, times),
    };
  });
  const covers = ['time_since_apex_s', ...specs.map((s) => (s.name === 'attack' ? 'attack_rad' : s.column))];
  return {
    source,
    name: scenario.name ?? 'Unnamed scenario',
    specs,
    grid,
    float32,
    crc32: crc32Float32([float32.axis, ...float32.tables]),
    crc32_covers: `the little-endian IEEE 754 binary32 bytes of the float32 arrays ${covers.join(', ')}, in that order (CRC-32/ISO-HDLC, as zlib)`,
    tables,
    problems,
    forced,
    exported: { pronk_version: PRONK_VERSION, date: (options.date ?? new Date()).toISOString() },
    caution: EXPORT_CAUTION,
  };
}

/** Greedy word wrap to `width` columns, each line starting with `prefix`. */
export function wrapLines(text: string, width: number, prefix = ''): string[] {
  const lines: string[] = [];
  let current = '';
  for (const word of text.split(/\s+/).filter(Boolean)) {
    if (current !== '' && prefix.length + current.length + 1 + word.length > width) {
      lines.push(prefix + current);
      current = word;
    } else current = current === '' ? word : `${current} ${word}`;
  }
  if (current !== '') lines.push(prefix + current);
  return lines;
}

/**
 * The continuous policy in one line: fixed and retraction blocks as JSON, time tables by their
 * size and ranges (the JSON export holds them at full precision).
 */
export function describePolicy(policy: PolicyExport['source']['policy']): string {
  const range = (v: number[], unit: string) => `${show(Math.min(...v))} to ${show(Math.max(...v))} ${unit}`;
  const angle = policy.angle;
  const a =
    angle.kind === 'time_table'
      ? `angle time_table of ${angle.time_since_apex_s.length} knots, ${range(angle.time_since_apex_s, 's')}, ${range(angle.attack_deg, 'deg')}`
      : `angle ${JSON.stringify(angle)}`;
  const stiffness = policy.stiffness;
  const k =
    stiffness.kind === 'time_table'
      ? `stiffness time_table of ${stiffness.time_since_apex_s.length} knots, ${range(stiffness.time_since_apex_s, 's')}, ` +
        `compression ${range(stiffness.compression_N_per_m, 'N/m')}, extension ${range(stiffness.extension_N_per_m, 'N/m')}`
      : `stiffness ${JSON.stringify(stiffness)}`;
  return `${a}; ${k}`;
}

/** A short description of the grid, for the file headers and the report. */
export function describeGrid(e: PolicyExport): string {
  const g = e.grid;
  const n = g.axes[0].points.length;
  const tMax = show(g.axes[0].points[n - 1]);
  const knots = g.mode === 'breakpoints' && g.breakpoints.length > 0 ? ` plus the policy's ${g.breakpoints.length} breakpoint${g.breakpoints.length === 1 ? '' : 's'}` : '';
  const how = g.mode === 'uniform' ? `${g.even_points} evenly spaced points` : `${g.even_points} evenly spaced points${knots}`;
  return `${n} points on 0 to ${tMax} s (${how}; t_max: ${g.t_max_source})`;
}
