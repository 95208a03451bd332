// The C99 export: a header (declarations, macros, the caution, provenance, units) and a source
// file (the float32 tables as `static const float`, the lookups, the checksum), for firmware.
//
// Constraints on the generated code: C99 with only <stdint.h> and <stdbool.h>; no heap, no libm;
// clean under gcc/clang -std=c99 -Wall -Wextra -Werror -pedantic (and -Wconversion,
// -Wdouble-promotion, -Wshadow, -Wmissing-prototypes). Every identifier starts with the prefix
// (macros with it in capitals), so several exported policies link into one binary. Angles are
// radians (the identifiers say `_rad`). The arithmetic of the lookup is the one lookup.ts
// reproduces in float32, operation for operation.

import { InputError } from '../errors.js';
import type { PolicyExport } from './build.js';
import { describeGrid, describePolicy, wrapLines } from './build.js';
import { hex32 } from './lookup.js';
import { float32Column } from './sample.js';
import { isBiped, LEG_NAMES, legParameters } from '../models/biped.js';

const C_KEYWORDS = new Set(
  (
    'auto break case char const continue default do double else enum extern float for goto if inline int long ' +
    'register restrict return short signed sizeof static struct switch typedef union unsigned void volatile while ' +
    'bool true false'
  ).split(' '),
);

/** Longest prefix accepted: identifiers stay within 63 characters (C99's internal-identifier minimum). */
export const MAX_PREFIX_LENGTH = 32;

/** Checks a `--prefix`: a lowercase C identifier (macros use it in capitals, so case must not distinguish two). */
export function checkPrefix(prefix: string, option = 'prefix'): string {
  const ok = /^[a-z][a-z0-9_]*$/.test(prefix) && prefix.length <= MAX_PREFIX_LENGTH && !C_KEYWORDS.has(prefix) && !prefix.endsWith('_');
  if (!ok) {
    throw new InputError([
      {
        path: option,
        expected: `a lowercase C identifier: a letter, then letters, digits or _ (not ending in _), at most ${MAX_PREFIX_LENGTH} characters, not a C keyword`,
        found: JSON.stringify(prefix),
      },
    ]);
  }
  return prefix;
}

/** The default prefix: the scenario's name as a lowercase identifier, or `pronk_policy`. */
export function defaultPrefix(name: string | undefined): string {
  let p = (name ?? '')
    .normalize('NFKD')
    .toLowerCase()
    .replace(/[^a-z0-9]+/g, '_')
    .replace(/^_+|_+$/g, '');
  if (p === '') return 'pronk_policy';
  if (!/^[a-z]/.test(p)) p = `p_${p}`;
  if (p.length > MAX_PREFIX_LENGTH) {
    const cut = p.lastIndexOf('_', MAX_PREFIX_LENGTH);
    p = (cut > 0 ? p.slice(0, cut) : p.slice(0, MAX_PREFIX_LENGTH)).replace(/_+$/, '');
  }
  return C_KEYWORDS.has(p) ? `${p}_policy` : p;
}

/**
 * A float32 value as a C float constant that reads back to the same bits (9 significant digits).
 * buildExport refuses every non-finite number before a writer runs, so one here is a bug.
 */
export function cFloat(value: number): string {
  if (!Number.isFinite(value)) throw new Error(`cFloat: a non-finite number (${value}) reached the C writer`);
  if (Object.is(value, -0)) return '-0.0f';
  return `${Math.fround(value).toPrecision(9)}f`;
}

// Text placed in a C comment: no comment terminator, no trigraph, one line.
function commentSafe(text: string): string {
  return text.replace(/\*\//g, '* /').replace(/\?\?/g, '? ?').replace(/[\r\n\t]+/g, ' ');
}

export function block(lines: readonly string[]): string {
  return ['/*', ...lines.map((l) => (l === '' ? ' *' : ` * ${commentSafe(l)}`)), ' */'].join('\n');
}

export const WIDTH = 96;

/** The last component of a path. */
export function baseName(path: string): string {
  return path.split(/[\\/]/).pop() ?? path;
}

// null: a constraint not measured (buildExport refuses those, so no written file holds one)
function fmt(x: number | null): string {
  if (x === null) return 'not measured';
  return Number.isFinite(x) ? String(Number(x.toPrecision(6))) : String(x);
}

// The first lines of the source file writeC makes for header `headerName`.
const sourceOpening = (headerName: string) => `/*\n * ${commentSafe(`${headerName.replace(/\.h$/, '.c')}: tables and lookups declared in ${headerName} `)}`;

/** True when `text` is a C source file that writeC made for the header `headerName` (an earlier export of it). */
export function isCSourceOf(text: string, headerName: string): boolean {
  return text.startsWith(sourceOpening(headerName));
}

export interface CFiles {
  headerName: string;
  sourceName: string;
  header: string;
  source: string;
}

/** The header and source text for prefix `prefix`; `headerName` is the header's file name (for the #include). */
export function writeC(e: PolicyExport, prefix: string, headerName: string): CFiles {
  checkPrefix(prefix);
  if (e.grid.axes.length !== 1) throw new Error(`the C export handles one grid axis, this grid has ${e.grid.axes.length}`);
  const P = prefix.toUpperCase();
  const p = prefix;
  const sourceName = headerName.replace(/\.h$/, '.c');
  const n = e.float32.axis.length;
  const hasStiffness = e.specs.some((spec) => spec.name === 'compression');
  // two legs, one table set per leg: a lookup per leg (p_left_attack_lookup, ...)
  const perLeg = e.legs === 'per_leg';
  const bipedScenario = isBiped(e.source.scenario) ? e.source.scenario : null;
  const walking = bipedScenario?.start.gait === 'walking';
  const body = e.source.scenario.body;
  const start = e.source.scenario.start;
  const prov = e.source.provenance;
  const stiffness = e.source.policy.stiffness;

  const caution = ['CAUTION', ...wrapLines(e.caution, WIDTH - 3, '  ')];
  const forced = e.forced
    ? ['', 'FORCED EXPORT: written with --force although:', ...e.problems.flatMap((m) => wrapLines(`- ${m}`, WIDTH - 3, '  '))]
    : [];
  const provenance = [
    'Provenance',
    `  input file        ${baseName(e.source.file)} (${e.source.kind === 'scenario' ? 'a scenario file' : `a ${e.source.kind} result file`})`,
    `  result SHA-256    ${prov.result_sha256}`,
    '                    (SHA-256 of the input file\'s canonical JSON: object keys sorted, no spaces)',
    `  scenario SHA-256  ${prov.scenario_sha256}${prov.scenario_sha256_matches ? '' : ' (does NOT match the scenario in the file: it was edited)'}`,
    ...(prov.source_pronk_version !== null ? [`  made by           Pronk ${prov.source_pronk_version} on ${prov.source_date}`] : []),
    `  exported by       Pronk ${e.exported.pronk_version} on ${e.exported.date}`,
    `  table CRC-32      ${hex32(e.crc32)} (${P}_TABLES_CRC32; ${p}_tables_checksum() recomputes it)`,
    ...wrapLines(`covering ${e.crc32_covers}`, WIDTH - 3, '                    '),
  ];
  const constraints = e.source.constraints;
  const made = [
    `Made for this body (SI): mass ${fmt(body.mass_kg)} kg, leg length ${fmt(body.leg_length_m)} m, leg stiffness ` +
      `${fmt(body.leg_stiffness_N_per_m)} N/m, gravity ${fmt(body.gravity_m_per_s2)} m/s^2, leg damping ${fmt(body.leg_damping_N_s_per_m)} N s/m; ` +
      `start apex ${fmt(start.apex_height_m)} m at ${fmt(start.forward_speed_m_per_s)} m/s.`,
    `Policy (continuous, as simulated): ${describePolicy(e.source.policy)}.`,
    constraints === null
      ? 'Constraints: none given.'
      : constraints.length === 0
        ? 'Constraints: none.'
        : `Constraints (margin >= 0 holds): ${constraints.map((c) => `${c.name} value ${fmt(c.value)}, limit ${fmt(c.limit)}, margin ${fmt(c.margin)}`).join('; ')}.`,
  ].flatMap((t) => wrapLines(t, WIDTH - 3));
  const errorLines = e.tables.map((t) => {
    const unit = t.unit === 'deg' ? 'deg' : 'N/m';
    return (
      `  ${t.name}: ${fmt(t.float64_error.max_abs)} ${unit} at t = ${fmt(t.float64_error.at_time_since_apex_s)} s (float64 table); ` +
      `${fmt(t.float32_error.max_abs)} ${unit} at t = ${fmt(t.float32_error.at_time_since_apex_s)} s as looked up in float32`
    );
  });
  const units = [
    'Units and ranges',
    walking
      ? `  time since apex   s, the clock started at the single-support apex (the highest point with one leg on the ground); grid 0 to ${P}_T_MAX_S, ${P}_N_POINTS points`
      : `  time since apex   s, the clock started at the flight apex; grid 0 to ${P}_T_MAX_S, ${P}_N_POINTS points`,
    ...(bipedScenario
      ? wrapLines(
          perLeg
            ? "Two legs, one table set per leg (the left leg's lookups, then the right's): the swing leg follows its own attack table, each stiffness table includes that leg's stiffness scale."
            : "Two legs, one table set for both: the swing leg follows the attack table; a leg's stiffness is the table (or the constant) times its _STIFFNESS_SCALE.",
          WIDTH - 3,
          '  ',
        )
      : []),
    '  attack angle      rad from the horizontal (pi/2 is a vertical leg); at touchdown the foot is ahead of',
    '                    the hip: foot_x = x + L0 cos(attack), touchdown when y = ground + L0 sin(attack)',
    ...(hasStiffness ? ['  leg stiffness     N/m, chosen at touchdown from the touchdown time since apex; compression until', '                    maximum compression, extension after'] : []),
    ...wrapLines(`Grid: ${describeGrid(e)}.`, WIDTH - 3),
    'Interpolation error against the continuous policy (dense check):',
    ...errorLines.flatMap((l) => wrapLines(l, WIDTH - 3, '  ').map((x, i) => (i === 0 ? x : `  ${x}`))),
  ];
  const lookupNotes = wrapLines(
    `Lookup: linear interpolation between grid points. Outside [0, ${P}_T_MAX_S] the value is held at the nearer end ` +
      'and the function returns false (true at both ends exactly); a NaN time gives the apex value (the first entry) and ' +
      'false. Output pointers must not be NULL. Needs only <stdint.h> and <stdbool.h>: no heap, no libm. Bit for bit the ' +
      "reference lookup of Pronk (src/core/export/lookup.ts) when compiled without fused multiply-add contraction " +
      '(-std=c99, or -ffp-contract=off) and with FLT_EVAL_METHOD 0; do not build it with -ffast-math (that removes the NaN test).',
    WIDTH - 3,
  );

  const guard = `${P}_POLICY_H`;
  const h: string[] = [
    block([
      `${headerName}: the attack-angle${hasStiffness ? ' and leg-stiffness' : ''} schedule of ${JSON.stringify(e.name)}, exported by Pronk for firmware.`,
      `Declarations; the tables and functions are in ${sourceName}.`,
      '',
      ...caution,
      ...forced,
      '',
      ...provenance,
      '',
      ...made,
      '',
      ...units,
      '',
      ...lookupNotes,
    ]),
    '',
    `#ifndef ${guard}`,
    `#define ${guard}`,
    '',
    '#include <stdbool.h>',
    '#include <stdint.h>',
    '',
    '#ifdef __cplusplus',
    'extern "C" {',
    '#endif',
    '',
    `#define ${P}_N_POINTS ${n}u /* grid points of every table */`,
    `#define ${P}_T_MAX_S ${cFloat(e.float32.axis[n - 1])} /* s since apex, the last grid point */`,
    `#define ${P}_TABLES_CRC32 ${hex32(e.crc32)}u /* what ${p}_tables_checksum() returns */`,
    `#define ${P}_HAS_STIFFNESS_TABLE ${hasStiffness ? 1 : 0}`,
    `#define ${P}_FORCED_EXPORT ${e.forced ? 1 : 0} /* 1: written with --force despite a refusal (see the top) */`,
    '',
    '/* The body and start apex the policy was made for (SI). */',
    `#define ${P}_BODY_MASS_KG ${cFloat(body.mass_kg)}`,
    `#define ${P}_BODY_LEG_LENGTH_M ${cFloat(body.leg_length_m)}`,
    `#define ${P}_BODY_LEG_STIFFNESS_N_PER_M ${cFloat(body.leg_stiffness_N_per_m)}`,
    `#define ${P}_BODY_GRAVITY_M_PER_S2 ${cFloat(body.gravity_m_per_s2)}`,
    `#define ${P}_BODY_LEG_DAMPING_N_S_PER_M ${cFloat(body.leg_damping_N_s_per_m)}`,
    `#define ${P}_START_APEX_HEIGHT_M ${cFloat(start.apex_height_m)}`,
    `#define ${P}_START_FORWARD_SPEED_M_PER_S ${cFloat(start.forward_speed_m_per_s)}`,
  ];
  if (bipedScenario) {
    h.push('', `/* Two legs (the two-leg model): each leg's rest length, stiffness scale and damping (SI). */`, `#define ${P}_TWO_LEGS 1`);
    if (walking) h.push(`#define ${P}_START_OFFSET_M ${cFloat(bipedScenario.start.offset_m)} /* body x minus stance foot x at the start */`);
    legParameters(bipedScenario).forEach((leg, i) => {
      const L = LEG_NAMES[i].toUpperCase();
      h.push(
        `#define ${P}_${L}_LEG_LENGTH_M ${cFloat(leg.length_m)}`,
        `#define ${P}_${L}_STIFFNESS_SCALE ${cFloat(leg.stiffness_scale)}`,
        `#define ${P}_${L}_LEG_DAMPING_N_S_PER_M ${cFloat(leg.damping_N_s_per_m)}`,
      );
    });
  }
  if (!hasStiffness) {
    const kc = stiffness.kind === 'split' ? stiffness.compression_N_per_m : body.leg_stiffness_N_per_m;
    const ke = stiffness.kind === 'split' ? stiffness.extension_N_per_m : body.leg_stiffness_N_per_m;
    h.push(
      '',
      `/* Leg stiffness, not scheduled (${stiffness.kind}): N/m in compression and in extension. */`,
      `#define ${P}_COMPRESSION_N_PER_M ${cFloat(Math.fround(kc))}`,
      `#define ${P}_EXTENSION_N_PER_M ${cFloat(Math.fround(ke))}`,
    );
    if (bipedScenario && perLeg) {
      // each leg's own (the scale within [1e-3, 1e3] and the stiffness within [1e-3, 1e12] N/m keep the product a normal float32)
      legParameters(bipedScenario).forEach((leg, i) => {
        const L = LEG_NAMES[i].toUpperCase();
        h.push(
          `#define ${P}_${L}_COMPRESSION_N_PER_M ${cFloat(Math.fround(kc * leg.stiffness_scale))}`,
          `#define ${P}_${L}_EXTENSION_N_PER_M ${cFloat(Math.fround(ke * leg.stiffness_scale))}`,
        );
      });
    }
  }
  // the lookups: one set, or one per leg (its tables' indices in e.specs)
  const lookupSets = (perLeg ? LEG_NAMES : [undefined]).map((leg) => ({
    name: leg ? `${p}_${leg}` : p,
    leg,
    attack: e.specs.findIndex((spec) => spec.name === 'attack' && spec.leg === leg),
    compression: e.specs.findIndex((spec) => spec.name === 'compression' && spec.leg === leg),
    extension: e.specs.findIndex((spec) => spec.name === 'extension' && spec.leg === leg),
  }));
  for (const set of lookupSets) {
    const whose = set.leg ? `The ${set.leg} leg's attack` : 'Attack';
    h.push(
      '',
      block([
        `${whose} angle to command at t_since_apex_s seconds after the ${walking ? 'single-support' : 'flight'} apex, rad from the horizontal.`,
        `Returns false when t is outside [0, ${P}_T_MAX_S] (the end value is written) or NaN (the apex value).`,
      ]),
      `bool ${set.name}_attack_lookup(float t_since_apex_s, float *attack_rad_out);`,
    );
    if (hasStiffness) {
      h.push(
        '',
        block([
          `${set.leg ? `The ${set.leg} leg's stiffness` : 'Leg stiffness'} for the stance that begins with a touchdown t_touchdown_since_apex_s after the apex, N/m:`,
          'compression until maximum compression, extension after. Returns false as the attack lookup does.',
        ]),
        `bool ${set.name}_stiffness_lookup(float t_touchdown_since_apex_s, float *compression_N_per_m_out, float *extension_N_per_m_out);`,
      );
    }
  }
  h.push(
    '',
    `/* CRC-32 of the tables in flash, recomputed now; compare with ${P}_TABLES_CRC32. */`,
    `uint32_t ${p}_tables_checksum(void);`,
    '',
    '#ifdef __cplusplus',
    '}',
    '#endif',
    '',
    `#endif /* ${guard} */`,
    '',
  );

  const array = (name: string, unit: string, values: Float32Array) => {
    const lines = [`/* ${unit} */`, `static const float ${name}[${P}_N_POINTS] = {`];
    const perLine = 6;
    for (let i = 0; i < values.length; i += perLine) {
      lines.push(`    ${Array.from(values.subarray(i, i + perLine), cFloat).join(', ')}${i + perLine < values.length ? ',' : ''}`);
    }
    lines.push('};');
    return lines.join('\n');
  };
  const tableNames = e.specs.map((s) => `${p}_${float32Column(s)}`);
  const c: string[] = [
    block([
      `${sourceName}: tables and lookups declared in ${headerName} (see there for provenance, units and the grid).`,
      '',
      ...caution,
      ...forced,
    ]),
    '',
    `#include "${headerName}"`,
    '',
    '/* The checksum reads each float as its 32 bits: float must be IEEE 754 binary32. */',
    `typedef char ${p}_float_is_32_bits[(sizeof(float) == 4u) ? 1 : -1];`,
    '',
    array(`${p}_time_since_apex_s`, 'Grid: time since apex, s, strictly increasing.', e.float32.axis),
    '',
    ...e.specs.flatMap((s, i) => [
      array(
        tableNames[i],
        `${s.leg ? `The ${s.leg} leg: ` : ''}${
          s.name === 'attack' ? 'Attack angle, rad from the horizontal, at each grid time.' : `${s.name[0].toUpperCase()}${s.name.slice(1)} stiffness, N/m, at each touchdown time.`
        }`,
        e.float32.tables[i],
      ),
      '',
    ]),
    `/* Linear interpolation on the grid, held (and false) outside it; see ${headerName}. */`,
    `static bool ${p}_interpolate(const float *table, float t, float *out)`,
    '{',
    `    const uint32_t last = ${P}_N_POINTS - 1u;`,
    `    const float *grid = ${p}_time_since_apex_s;`,
    '    uint32_t lo = 0u;',
    '    uint32_t hi = last;',
    '    float w;',
    '    if (t != t) { /* NaN */',
    '        *out = table[0];',
    '        return false;',
    '    }',
    '    if (t <= grid[0]) {',
    '        *out = table[0];',
    '        return t >= grid[0];',
    '    }',
    '    if (t >= grid[last]) {',
    '        *out = table[last];',
    '        return t <= grid[last];',
    '    }',
    '    while (hi - lo > 1u) { /* grid[lo] <= t < grid[hi] */',
    '        const uint32_t mid = lo + (hi - lo) / 2u;',
    '        if (grid[mid] <= t) {',
    '            lo = mid;',
    '        } else {',
    '            hi = mid;',
    '        }',
    '    }',
    '    w = (t - grid[lo]) / (grid[hi] - grid[lo]);',
    '    *out = table[lo] + w * (table[hi] - table[lo]);',
    '    return true;',
    '}',
    '',
  ];
  for (const set of lookupSets) {
    c.push(
      `bool ${set.name}_attack_lookup(float t_since_apex_s, float *attack_rad_out)`,
      '{',
      `    return ${p}_interpolate(${tableNames[set.attack]}, t_since_apex_s, attack_rad_out);`,
      '}',
      '',
    );
    if (hasStiffness) {
      c.push(
        `bool ${set.name}_stiffness_lookup(float t_touchdown_since_apex_s, float *compression_N_per_m_out, float *extension_N_per_m_out)`,
        '{',
        `    const bool in_range = ${p}_interpolate(${tableNames[set.compression]}, t_touchdown_since_apex_s, compression_N_per_m_out);`,
        `    (void)${p}_interpolate(${tableNames[set.extension]}, t_touchdown_since_apex_s, extension_N_per_m_out);`,
        '    return in_range;',
        '}',
        '',
      );
    }
  }
  c.push(
    '/* CRC-32/ISO-HDLC (the zlib CRC) register after the little-endian bytes of `count` floats. */',
    `static uint32_t ${p}_crc32_floats(uint32_t crc, const float *values, uint32_t count)`,
    '{',
    '    uint32_t i;',
    '    for (i = 0u; i < count; i++) {',
    '        union {',
    '            float f;',
    '            uint32_t u;',
    '        } bits;',
    '        uint32_t byte;',
    '        bits.f = values[i];',
    '        for (byte = 0u; byte < 4u; byte++) {',
    '            uint32_t k;',
    '            crc ^= (bits.u >> (8u * byte)) & 0xffu;',
    '            for (k = 0u; k < 8u; k++) {',
    '                crc = (crc >> 1) ^ (0xedb88320u & (0u - (crc & 1u)));',
    '            }',
    '        }',
    '    }',
    '    return crc;',
    '}',
    '',
    `uint32_t ${p}_tables_checksum(void)`,
    '{',
    '    uint32_t crc = 0xffffffffu;',
    `    crc = ${p}_crc32_floats(crc, ${p}_time_since_apex_s, ${P}_N_POINTS);`,
    ...tableNames.map((t) => `    crc = ${p}_crc32_floats(crc, ${t}, ${P}_N_POINTS);`),
    '    return crc ^ 0xffffffffu;',
    '}',
    '',
  );
  return { headerName, sourceName, header: h.join('\n'), source: c.join('\n') };
}
