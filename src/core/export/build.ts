// One export: the source's policy sampled on its grid (sample.ts), rounded to the float32 tables
// the C runs, checked, measured and checksummed. The three writers (c99.ts, json.ts, csv.ts)
// only format a PolicyExport.
//
// Refusals, of two kinds:
// - a number firmware must not run, never written, not even with `force`: every exported number
//   (each table entry, each grid time, t_max, each macro of the body, the start and an unscheduled
//   stiffness) is checked once rounded to float32, as the C holds it: finite, within its physical
//   range (angles in (0, 90] deg; times, stiffnesses, mass, leg length and gravity > 0; damping and
//   speed >= 0) and, unless exactly 0 where 0 is allowed, at least the smallest normal float32
//   (a subnormal is flushed to zero by many microcontrollers' FPUs, and a smaller value rounds to 0);
// - a constraint of the result file with a negative margin: written with `force`, and every
//   written file says so;
// - a constraint of the result file that was not measured (value and margin null: the held-out
//   rollouts completed no stride), never written, not even with `force`: a policy that never
//   completes a stride has nothing to show it holds any limit.
// Each refusal is an InputError naming the number (table and index, or field and C macro), what was
// expected and what was found.

import { InputError, type InputIssue } from '../errors.js';
import { SAFETY_CAUTION } from '../safety.js';
import { PRONK_VERSION } from '../version.js';
import { isBiped, LEG_NAMES, legParameters } from '../models/biped.js';
import type { ExportSource } from './input.js';
import { crc32Float32, type Float32Table } from './lookup.js';
import {
  checkTimes,
  chooseGrid,
  defaultTimeRange,
  leavesAttackRangeS,
  float32Error,
  float64Error,
  float32Column,
  tableSpecs,
  type ChosenGrid,
  type LegTables,
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
  /** Write despite negative constraint margins, and say so in the files (never past an unsafe number). */
  force?: boolean;
  /** When the export is made (default now). */
  date?: Date;
  /** Option names for messages (the CLI passes its flags). */
  names?: GridOptionNames & { t_max: string; legs?: string };
  /** Two-leg scenarios: one table set for both legs ('shared', the default) or one per leg ('per_leg'). */
  legs?: LegTables;
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
  /** Two-leg exports: 'shared' (one table set, each leg's stiffness its scale times the table) or 'per_leg'; null for one leg. */
  legs: LegTables | null;
  specs: TableSpec[];
  grid: ChosenGrid;
  /** (points) float32 time axis and one float32 table per spec, in C units (rad, N/m). */
  float32: { axis: Float32Array; tables: Float32Array[] };
  /** CRC-32 of the little-endian float32 bytes of the axis, then each table in order. */
  crc32: number;
  crc32_covers: string;
  tables: TableReport[];
  /** The negative constraint margins it was forced past (empty when it is clean). */
  problems: string[];
  forced: boolean;
  exported: { pronk_version: string; date: string };
  caution: string;
}

/** Constraints the result file could not measure (value null), each an issue naming it. */
function unmeasuredConstraints(source: ExportSource): InputIssue[] {
  return (source.constraints ?? []).flatMap((c, i) =>
    c.value === null || c.margin === null
      ? [
          {
            path: `constraints[${i}]`,
            expected: `a measured value for constraint ${JSON.stringify(c.name)} (limit ${show(c.limit)})`,
            found: 'null',
            message:
              `constraint ${JSON.stringify(c.name)} was not measured (value null): no held-out stride completed, ` +
              'so nothing shows the policy holds its limit; a policy that never completes a stride is not exported (--force does not write it)',
          },
        ]
      : [],
  );
}

const show = (x: number) => (Number.isFinite(x) ? String(Number(x.toPrecision(6))) : String(x));

function constraintProblems(source: ExportSource): string[] {
  return (source.constraints ?? [])
    .flatMap((c) =>
      c.value !== null && c.margin !== null && c.margin < 0
        ? [`constraint ${JSON.stringify(c.name)} is violated: value ${show(c.value)}, limit ${show(c.limit)}, margin ${show(c.margin)} (a negative margin)`]
        : [],
    );
}

/** The smallest normal float32, 2^-126 (IEEE 754 binary32). */
export const FLOAT32_MIN_NORMAL = 2 ** -126;
/** 90 deg in radians, as float32 (it rounds up: 1.57079637 > pi/2). */
const RIGHT_ANGLE_RAD_F32 = Math.fround(Math.PI / 2);

export type Sign = 'positive' | 'non-negative' | 'any';

/**
 * What is wrong with one exported number, or null: `value` is the float64 value (in `unit`),
 * `f32` the float32 the C holds (for the attack angle: in radians).
 */
export function numberProblem(value: number, f32: number, sign: Sign, unit: string): { expected: string; found: string } | null {
  const u = unit === '' ? '' : ` ${unit}`;
  const range = sign === 'positive' ? 'a number > 0' : sign === 'non-negative' ? 'a number >= 0' : 'a number';
  const expected = `${range} that float32 holds (finite; ${sign === 'positive' ? '' : '0 or '}at least ${show(FLOAT32_MIN_NORMAL)} in magnitude)`;
  if (!Number.isFinite(value)) return { expected, found: `${value}` };
  if (sign === 'positive' && !(value > 0)) return { expected, found: `${show(value)}${u}` };
  if (sign === 'non-negative' && value < 0) return { expected, found: `${show(value)}${u}` };
  if (!Number.isFinite(f32)) return { expected, found: `${show(value)}${u}, which is ${f32} in float32 (beyond the float32 range, about 3.4e38)` };
  if (value !== 0 && f32 === 0) return { expected, found: `${show(value)}${u}, which float32 flushes to 0` };
  if (f32 !== 0 && Math.abs(f32) < FLOAT32_MIN_NORMAL) return { expected, found: `${show(value)}${u}, a subnormal float32 (many FPUs flush it to 0)` };
  return null;
}

function attackProblem(deg: number, rad32: number): { expected: string; found: string } | null {
  const expected = 'an angle in (0, 90] deg that float32 holds as a normal number';
  if (!Number.isFinite(deg) || !(deg > 0 && deg <= 90)) return { expected, found: Number.isFinite(deg) ? `${show(deg)} deg` : `${deg}` };
  if (rad32 === 0) return { expected, found: `${show(deg)} deg, which float32 flushes to 0 rad` };
  if (rad32 < FLOAT32_MIN_NORMAL) return { expected, found: `${show(deg)} deg, a subnormal float32 in rad (many FPUs flush it to 0)` };
  if (rad32 > RIGHT_ANGLE_RAD_F32) return { expected, found: `${show(deg)} deg (${rad32} rad in float32)` };
  return null;
}

/** Every exported number that firmware must not run (see the file comment), as InputIssues. */
export function unsafeNumbers(source: ExportSource, specs: readonly TableSpec[], grid: ChosenGrid, float32: PolicyExport['float32']): InputIssue[] {
  const issues: InputIssue[] = [];
  const times = grid.axes[0].points;
  const n = times.length;
  times.forEach((t, j) => {
    const where = j === n - 1 ? `grid time point ${j} (t_max, the C macro ..._T_MAX_S)` : `grid time point ${j}`;
    const problem = j === 0 ? (t === 0 && float32.axis[0] === 0 ? null : { expected: '0 s (the apex)', found: `${show(t)} s` }) : numberProblem(t, float32.axis[j], 'positive', 's');
    if (problem) issues.push({ path: where, ...problem });
  });
  specs.forEach((spec, i) => {
    grid.values[i].forEach((v, j) => {
      const where = `${spec.leg ? `${spec.leg} ` : ''}${spec.name} table point ${j} (t = ${show(times[j])} s)`;
      const f32 = float32.tables[i][j];
      const problem = spec.name === 'attack' ? attackProblem(v, f32) : numberProblem(v, f32, 'positive', spec.unit);
      if (problem) issues.push({ path: where, ...problem });
    });
  });
  const { body, start } = source.scenario;
  const macros: [string, string, number, Sign, string][] = [
    ['body.mass_kg', 'BODY_MASS_KG', body.mass_kg, 'positive', 'kg'],
    ['body.leg_length_m', 'BODY_LEG_LENGTH_M', body.leg_length_m, 'positive', 'm'],
    ['body.leg_stiffness_N_per_m', 'BODY_LEG_STIFFNESS_N_PER_M', body.leg_stiffness_N_per_m, 'positive', 'N/m'],
    ['body.gravity_m_per_s2', 'BODY_GRAVITY_M_PER_S2', body.gravity_m_per_s2, 'positive', 'm/s^2'],
    ['body.leg_damping_N_s_per_m', 'BODY_LEG_DAMPING_N_S_PER_M', body.leg_damping_N_s_per_m, 'non-negative', 'N s/m'],
    ['start.apex_height_m', 'START_APEX_HEIGHT_M', start.apex_height_m, 'any', 'm'],
    ['start.forward_speed_m_per_s', 'START_FORWARD_SPEED_M_PER_S', start.forward_speed_m_per_s, 'non-negative', 'm/s'],
  ];
  const stiffness = source.policy.stiffness;
  if (stiffness.kind === 'split') {
    macros.push(['policy.stiffness.compression_N_per_m', 'COMPRESSION_N_PER_M', stiffness.compression_N_per_m, 'positive', 'N/m']);
    macros.push(['policy.stiffness.extension_N_per_m', 'EXTENSION_N_PER_M', stiffness.extension_N_per_m, 'positive', 'N/m']);
  }
  if (isBiped(source.scenario)) {
    // each leg's rest length, stiffness scale and damping (the C macros ..._LEFT_LEG_LENGTH_M, ...)
    legParameters(source.scenario).forEach((leg, i) => {
      const name = LEG_NAMES[i];
      const up = name.toUpperCase();
      macros.push([`legs.${name}.leg_length_m`, `${up}_LEG_LENGTH_M`, leg.length_m, 'positive', 'm']);
      macros.push([`legs.${name}.stiffness_scale`, `${up}_STIFFNESS_SCALE`, leg.stiffness_scale, 'positive', '']);
      macros.push([`legs.${name}.leg_damping_N_s_per_m`, `${up}_LEG_DAMPING_N_S_PER_M`, leg.damping_N_s_per_m, 'non-negative', 'N s/m']);
    });
    if (source.scenario.start.gait === 'walking') macros.push(['start.offset_m', 'START_OFFSET_M', source.scenario.start.offset_m, 'any', 'm']);
  }
  for (const [field, macro, value, sign, unit] of macros) {
    const problem = numberProblem(value, Math.fround(value), sign, unit);
    if (problem) issues.push({ path: `${field} (the C macro ..._${macro})`, ...problem });
  }
  return issues;
}

// Why a retraction's table leaves (0, 90] deg, and what to do, when that is the cause.
function retractionHint(source: ExportSource, range: TimeRange, names: { t_max: string }): InputIssue[] {
  const angle = source.policy.angle;
  const leaves = leavesAttackRangeS(angle);
  if (angle.kind !== 'retraction' || !(leaves <= range.t_max_s)) return [];
  const up = angle.rate_deg_per_s > 0;
  return [
    {
      path: names.t_max,
      expected: `${up ? 'at most' : 'below'} ${show(leaves)} s`,
      found: `${show(range.t_max_s)} s`,
      message:
        `the retraction has no ${up ? 'max_deg' : 'min_deg'} and reaches ${up ? 90 : 0} deg at t = ${show(leaves)} s, past which it leaves ` +
        `the attack range (0, 90] deg: set ${names.t_max} ${up ? 'to at most' : 'below'} that, or give the retraction a ${up ? 'max_deg' : 'min_deg'}`,
    },
  ];
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
    if (isBiped(scenario) && scenario.start.gait === 'walking' && policy.angle.kind !== 'time_table') {
      // in single support the stance leg holds the body up: no fall time bounds the swing leg's touchdown
      throw new InputError([
        {
          path: names.t_max,
          expected: `the end of the time axis (s since the single-support apex, ${T_MAX_RANGE_S[0]} to ${T_MAX_RANGE_S[1]})`,
          found: 'missing',
          message:
            `a two-leg walking scenario with a ${policy.angle.kind} attack angle needs ${names.t_max} (the latest touchdown ` +
            'after the single-support apex the table must cover, e.g. from pronk simulate): the stance leg holds the body up, so no fall ' +
            'time bounds it',
        },
      ]);
    }
    range = defaultTimeRange(scenario, policy);
  }
  const biped = isBiped(scenario);
  if (!biped && options.legs === 'per_leg') {
    throw new InputError([{ path: names.legs ?? 'legs', expected: 'shared for a single-leg scenario (per_leg needs a two-leg scenario)', found: 'per_leg' }]);
  }
  const legs = biped ? (options.legs ?? 'shared') : null;
  const specs = tableSpecs(scenario, policy, legs ?? 'shared');
  const grid = chooseGrid(specs, policy, range, options.mode ?? 'breakpoints', options.grid ?? { by: 'points', points: 2 }, names);
  const axis = grid.axes[0];
  const float32 = {
    axis: Float32Array.from(axis.points),
    tables: specs.map((spec, i) => Float32Array.from(grid.values[i], (v) => spec.toFloat32(v))),
  };
  const unsafe = unsafeNumbers(source, specs, grid, float32);
  if (unsafe.length) {
    const shown = unsafe.slice(0, MAX_PROBLEMS_SHOWN);
    if (unsafe.length > shown.length) shown.push({ path: '', expected: '', found: '', message: `... and ${unsafe.length - shown.length} more numbers like these` });
    if (unsafe.some((issue) => issue.path.startsWith('attack table'))) shown.push(...retractionHint(source, range, names));
    shown.push({ path: '', expected: '', found: '', message: 'nothing written: firmware must not run these numbers (--force does not write them)' });
    throw new InputError(shown, { source: source.file });
  }
  const unmeasured = unmeasuredConstraints(source);
  if (unmeasured.length) throw new InputError(unmeasured, { source: source.file });
  const problems = constraintProblems(source);
  const forced = problems.length > 0;
  if (forced && !options.force) {
    const issues: InputIssue[] = problems.map((message) => ({ path: '', expected: '', found: '', message }));
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
  const covers = ['time_since_apex_s', ...specs.map(float32Column)];
  return {
    source,
    name: scenario.name ?? 'Unnamed scenario',
    legs,
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
