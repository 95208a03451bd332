// The JSON export (format "pronk-policy", format_version 1): the policy at full precision
// (float64: the continuous policy block and its tables on the grid), the float32 tables exactly
// as the C holds them, units, grid, interpolation error, body, provenance, constraints and the
// caution. Numbers are JSON numbers; JavaScript writes the shortest text that reads back to the
// same double, so every value round-trips (a float32 value is written as the double it equals).
// buildExport refuses every non-finite number, so none reaches this writer (one would be a bug);
// the reader still takes the strings "NaN", "Infinity" and "-Infinity" that forced exports of
// earlier versions wrote.

import { InputError, describeFound } from '../errors.js';
import { parseJson } from '../scenario.js';
import { describeGrid, type PolicyExport } from './build.js';
import { baseName } from './c99.js';
import { hex32 } from './lookup.js';
import { float32Column } from './sample.js';
import { isBiped, legParameters } from '../models/biped.js';

export const POLICY_FORMAT = 'pronk-policy';
export const POLICY_FORMAT_VERSION = 1;

type JsonNumber = number;

function num(x: number): JsonNumber {
  if (!Number.isFinite(x)) throw new Error(`policyDocument: a non-finite number (${x}) reached the JSON writer`);
  return x;
}

const nums = (values: ArrayLike<number>): JsonNumber[] => Array.from(values, num);

/** The pronk-policy document (a plain object; JSON.stringify it). */
export function policyDocument(e: PolicyExport): Record<string, unknown> {
  const axis = e.grid.axes[0];
  const prov = e.source.provenance;
  const float64: Record<string, JsonNumber[]> = { time_since_apex_s: nums(axis.points) };
  const float32: Record<string, JsonNumber[]> = { time_since_apex_s: nums(e.float32.axis) };
  e.specs.forEach((spec, i) => {
    float64[spec.column] = nums(e.grid.values[i]);
    float32[float32Column(spec)] = nums(e.float32.tables[i]);
  });
  return {
    format: POLICY_FORMAT,
    format_version: POLICY_FORMAT_VERSION,
    name: e.name,
    caution: e.caution,
    forced: e.forced,
    forced_over: e.problems,
    provenance: {
      input_file: baseName(e.source.file),
      input_kind: e.source.kind,
      result_sha256: prov.result_sha256,
      result_sha256_definition: "SHA-256 of the input file's canonical JSON (object keys sorted, no spaces)",
      scenario_sha256: prov.scenario_sha256,
      scenario_sha256_matches: prov.scenario_sha256_matches,
      source_pronk_version: prov.source_pronk_version,
      source_date: prov.source_date,
      pronk_version: e.exported.pronk_version,
      date: e.exported.date,
    },
    body: e.source.scenario.body,
    ...bipedFields(e),
    start: e.source.scenario.start,
    policy: e.source.policy,
    constraints: e.source.constraints ?? [],
    constraints_given: e.source.constraints !== null,
    units: {
      time_since_apex_s: 's since the flight apex (for the stiffness: the touchdown time since apex)',
      attack_deg: 'deg from the horizontal (90 is a vertical leg)',
      attack_rad: 'rad from the horizontal (float32 table)',
      compression_N_per_m: 'N/m, until maximum compression',
      extension_N_per_m: 'N/m, after maximum compression',
    },
    grid: {
      axes: e.grid.axes.map((a) => ({ name: a.name, unit: a.unit, points: a.points.length, low: num(a.points[0]), high: num(a.points[a.points.length - 1]) })),
      mode: e.grid.mode,
      even_points: e.grid.even_points,
      breakpoints_s: e.grid.breakpoints,
      t_max_s: e.grid.t_max_s,
      t_max_source: e.grid.t_max_source,
      search: e.grid.search,
      description: describeGrid(e),
    },
    lookup:
      'linear interpolation on time_since_apex_s; outside [0, t_max] the value is held at the nearer end (the lookup reports it as clamped); ' +
      'a NaN time gives the first value',
    tables: { float64, float32 },
    float32_crc32: hex32(e.crc32),
    float32_crc32_covers: e.crc32_covers,
    interpolation_error: Object.fromEntries(
      e.tables.map((t) => [
        t.column,
        {
          unit: t.unit,
          float64_max_abs: num(t.float64_error.max_abs),
          float64_at_time_since_apex_s: t.float64_error.at_time_since_apex_s,
          float32_max_abs: num(t.float32_error.max_abs),
          float32_at_time_since_apex_s: t.float32_error.at_time_since_apex_s,
        },
      ]),
    ),
  };
}

// Two-leg exports only (a single-leg document is unchanged): the model, the section the clock
// starts at, each leg's parameters and how the tables map to the legs.
function bipedFields(e: PolicyExport): Record<string, unknown> {
  const scenario = e.source.scenario;
  if (e.legs === null || !isBiped(scenario)) return {};
  const params = legParameters(scenario);
  return {
    model: 'biped',
    clock:
      scenario.start.gait === 'walking'
        ? 's since the single-support apex (the highest point with one leg on the ground); for the stiffness: the touchdown time since it'
        : 's since the flight apex; for the stiffness: the touchdown time since it',
    legs: {
      tables: e.legs,
      tables_note:
        e.legs === 'per_leg'
          ? 'one table set per leg (columns left_..., right_...): each leg commands its own; stiffness tables include the leg\'s stiffness_scale'
          : 'one table set for both legs: the swing leg follows the attack table; a leg\'s stiffness is the table (or the policy\'s constant) times its stiffness_scale',
      left: { leg_length_m: num(params[0].length_m), stiffness_scale: num(params[0].stiffness_scale), leg_damping_N_s_per_m: num(params[0].damping_N_s_per_m) },
      right: { leg_length_m: num(params[1].length_m), stiffness_scale: num(params[1].stiffness_scale), leg_damping_N_s_per_m: num(params[1].damping_N_s_per_m) },
    },
  };
}

export function writeJson(e: PolicyExport): string {
  return `${JSON.stringify(policyDocument(e), null, 2)}\n`;
}

/** The tables of a pronk-policy document, back as numbers (the strings of a forced export too). */
export interface PolicyTables {
  float64: Record<string, number[]>;
  float32: Record<string, number[]>;
}

/** Reads the tables back from a pronk-policy document's text. */
export function readPolicyTables(text: string, source = 'pronk-policy'): PolicyTables {
  const doc = parseJson(text, source) as Record<string, unknown>;
  if (doc.format !== POLICY_FORMAT || doc.format_version !== POLICY_FORMAT_VERSION) {
    throw new InputError([{ path: 'format', expected: `${POLICY_FORMAT} version ${POLICY_FORMAT_VERSION}`, found: describeFound(doc.format) }], { source });
  }
  const back = (v: unknown) => (typeof v === 'number' ? v : v === 'NaN' ? NaN : v === 'Infinity' ? Infinity : v === '-Infinity' ? -Infinity : NaN);
  const tables = doc.tables as { float64: Record<string, unknown[]>; float32: Record<string, unknown[]> };
  const convert = (t: Record<string, unknown[]>) => Object.fromEntries(Object.entries(t).map(([k, v]) => [k, v.map(back)]));
  return { float64: convert(tables.float64), float32: convert(tables.float32) };
}
