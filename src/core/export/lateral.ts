// Export of a lateral leg-spring scenario ("model": "lateral"): its policy has no schedule (a fixed
// touchdown angle to the body axis, a constant stiffness, the attachment point d(t) = d0 + d1 t),
// so what firmware needs are the chosen values, not tables. They are written with the guarantees
// of the table export (build.ts): each value checked once rounded to float32 (finite, within its
// physical range, never flushed to zero or subnormal), refused by name otherwise (never forced);
// a CRC-32 over the float32 values in order; the caution, provenance and units in every file; C99
// (header with macros, source with the values array and its checksum), JSON and CSV.

import { InputError, type InputIssue } from '../errors.js';
import type { LateralScenario } from '../models/lateral.js';
import { PRONK_VERSION, contentHash } from '../version.js';
import { EXPORT_CAUTION, numberProblem, wrapLines, type Sign } from './build.js';
import { baseName, block, cFloat, checkPrefix, WIDTH } from './c99.js';
import { crc32Float32, hex32 } from './lookup.js';

const DEG = Math.PI / 180;

export interface LateralValue {
  /** The scenario field. */
  field: string;
  /** The C macro after the prefix, and the JSON/CSV name. */
  name: string;
  /** In C units (the angle in rad). */
  value: number;
  float32: number;
  unit: string;
}

export interface LateralExport {
  file: string;
  name: string;
  values: LateralValue[];
  crc32: number;
  crc32_covers: string;
  provenance: { result_sha256: string; scenario_sha256: string };
  exported: { pronk_version: string; date: string };
  caution: string;
}

/** The chosen values of a lateral scenario, checked as float32 (throws an InputError naming each refused one). */
export async function buildLateralExport(
  scenario: LateralScenario,
  file: string,
  raw: unknown,
  options: { date?: Date } = {},
): Promise<LateralExport> {
  const b = scenario.body;
  const angleDeg = scenario.policy.angle.angle_to_body_deg;
  const rows: [string, string, number, Sign, string][] = [
    ['policy.angle.angle_to_body_deg', 'TOUCHDOWN_ANGLE_RAD', angleDeg * DEG, 'positive', 'rad'],
    ['body.leg_stiffness_N_per_m', 'LEG_STIFFNESS_N_PER_M', b.leg_stiffness_N_per_m, 'positive', 'N/m'],
    ['body.attachment_offset_m', 'ATTACHMENT_OFFSET_M', b.attachment_offset_m, 'any', 'm'],
    ['body.attachment_rate_m_per_s', 'ATTACHMENT_RATE_M_PER_S', b.attachment_rate_m_per_s, 'any', 'm/s'],
    ['body.leg_length_m', 'LEG_LENGTH_M', b.leg_length_m, 'positive', 'm'],
    ['body.mass_kg', 'MASS_KG', b.mass_kg, 'positive', 'kg'],
    ['body.moment_of_inertia_kg_m2', 'MOMENT_OF_INERTIA_KG_M2', b.moment_of_inertia_kg_m2, 'positive', 'kg m^2'],
    ['start.speed_m_per_s', 'START_SPEED_M_PER_S', scenario.start.speed_m_per_s, 'positive', 'm/s'],
    ['start.heading_to_body_deg', 'START_HEADING_TO_BODY_RAD', scenario.start.heading_to_body_deg * DEG, 'any', 'rad'],
    ['start.angular_velocity_deg_per_s', 'START_ANGULAR_VELOCITY_RAD_PER_S', scenario.start.angular_velocity_deg_per_s * DEG, 'any', 'rad/s'],
  ];
  const issues: InputIssue[] = [];
  const values = rows.map(([field, name, value, sign, unit]) => {
    const f32 = Math.fround(value);
    const problem = numberProblem(value, f32, sign, unit);
    if (problem) issues.push({ path: `${field} (the C macro ..._${name})`, ...problem });
    return { field, name, value, float32: f32, unit };
  });
  // the touchdown angle within (0, 90] deg once rounded (90 deg rounds up in float32: allowed as the C holds it)
  if (!(angleDeg > 0 && angleDeg <= 90)) {
    issues.push({ path: 'policy.angle.angle_to_body_deg', expected: 'an angle in (0, 90] deg to the body axis', found: `${angleDeg} deg` });
  }
  if (issues.length) {
    issues.push({ path: '', expected: '', found: '', message: 'nothing written: firmware must not run these numbers (--force does not write them)' });
    throw new InputError(issues, { source: file });
  }
  const array = Float32Array.from(values, (v) => v.float32);
  return {
    file,
    name: scenario.name ?? 'Unnamed scenario',
    values,
    crc32: crc32Float32([array]),
    crc32_covers: `the little-endian IEEE 754 binary32 bytes of the values ${values.map((v) => v.name).join(', ')}, in that order (CRC-32/ISO-HDLC, as zlib)`,
    provenance: { result_sha256: await contentHash(raw), scenario_sha256: await contentHash(scenario) },
    exported: { pronk_version: PRONK_VERSION, date: (options.date ?? new Date()).toISOString() },
    caution: EXPORT_CAUTION,
  };
}

const describe = (e: LateralExport) =>
  `the lateral leg-spring values of ${JSON.stringify(e.name)}: touchdown angle to the body axis, leg stiffness, the attachment ` +
  'point d(t) = d0 + d1 t on the body axis (ahead of the centre of mass positive, t since touchdown), the body and the start';

/** C99 header (macros, the caution, provenance, units) and source (the float32 values and their checksum). */
export function writeLateralC(e: LateralExport, prefix: string, headerName: string): { header: string; source: string; sourceName: string } {
  checkPrefix(prefix);
  const P = prefix.toUpperCase();
  const p = prefix;
  const sourceName = headerName.replace(/\.h$/, '.c');
  const n = e.values.length;
  const guard = `${P}_POLICY_H`;
  const header = [
    block([
      `${headerName}: ${describe(e)}, exported by Pronk for firmware. The checksum is in ${sourceName}.`,
      '',
      'CAUTION',
      ...wrapLines(e.caution, WIDTH - 3, '  '),
      '',
      'Provenance',
      `  input file        ${baseName(e.file)} (a lateral scenario file)`,
      `  input SHA-256     ${e.provenance.result_sha256}`,
      `  scenario SHA-256  ${e.provenance.scenario_sha256}`,
      `  exported by       Pronk ${e.exported.pronk_version} on ${e.exported.date}`,
      `  values CRC-32     ${hex32(e.crc32)} (${P}_VALUES_CRC32; ${p}_values_checksum() recomputes it)`,
      ...wrapLines(`covering ${e.crc32_covers}`, WIDTH - 3, '                    '),
      '',
      'Units: SI; angles in rad (the touchdown angle from the body axis, the foot ahead and to the side, mirrored left and right).',
    ]),
    '',
    `#ifndef ${guard}`,
    `#define ${guard}`,
    '',
    '#include <stdint.h>',
    '',
    '#ifdef __cplusplus',
    'extern "C" {',
    '#endif',
    '',
    `#define ${P}_N_VALUES ${n}u`,
    `#define ${P}_VALUES_CRC32 ${hex32(e.crc32)}u /* what ${p}_values_checksum() returns */`,
    ...e.values.map((v) => `#define ${P}_${v.name} ${cFloat(v.float32)} /* ${v.unit}, ${v.field} */`),
    '',
    `/* CRC-32 of the values in flash (in the order of the macros above), recomputed now; compare with ${P}_VALUES_CRC32. */`,
    `uint32_t ${p}_values_checksum(void);`,
    '',
    '#ifdef __cplusplus',
    '}',
    '#endif',
    '',
    `#endif /* ${guard} */`,
    '',
  ].join('\n');
  const source = [
    block([`${sourceName}: the values declared in ${headerName}.`, '', 'CAUTION', ...wrapLines(e.caution, WIDTH - 3, '  ')]),
    '',
    `#include "${headerName}"`,
    '',
    `typedef char ${p}_float_is_32_bits[(sizeof(float) == 4u) ? 1 : -1];`,
    '',
    `static const float ${p}_values[${P}_N_VALUES] = {`,
    ...e.values.map((v, i) => `    ${P}_${v.name}${i + 1 < n ? ',' : ''}`),
    '};',
    '',
    `uint32_t ${p}_values_checksum(void)`,
    '{',
    '    uint32_t crc = 0xffffffffu;',
    '    uint32_t i;',
    `    for (i = 0u; i < ${P}_N_VALUES; i++) {`,
    '        union {',
    '            float f;',
    '            uint32_t u;',
    '        } bits;',
    '        uint32_t byte;',
    `        bits.f = ${p}_values[i];`,
    '        for (byte = 0u; byte < 4u; byte++) {',
    '            uint32_t k;',
    '            crc ^= (bits.u >> (8u * byte)) & 0xffu;',
    '            for (k = 0u; k < 8u; k++) {',
    '                crc = (crc >> 1) ^ (0xedb88320u & (0u - (crc & 1u)));',
    '            }',
    '        }',
    '    }',
    '    return crc ^ 0xffffffffu;',
    '}',
    '',
  ].join('\n');
  return { header, source, sourceName };
}

/** JSON (format pronk-policy, model lateral): the values in float64 and float32, units, provenance, caution. */
export function writeLateralJson(e: LateralExport): string {
  const doc = {
    format: 'pronk-policy',
    format_version: 1,
    model: 'lateral',
    name: e.name,
    caution: e.caution,
    provenance: {
      input_file: baseName(e.file),
      input_kind: 'scenario',
      result_sha256: e.provenance.result_sha256,
      scenario_sha256: e.provenance.scenario_sha256,
      pronk_version: e.exported.pronk_version,
      date: e.exported.date,
    },
    values: Object.fromEntries(e.values.map((v) => [v.name.toLowerCase(), { field: v.field, unit: v.unit, float64: v.value, float32: v.float32 }])),
    float32_crc32: hex32(e.crc32),
    float32_crc32_covers: e.crc32_covers,
  };
  return `${JSON.stringify(doc, null, 2)}\n`;
}

/** CSV: one row per value (name, field, unit, float64 with 17 digits, float32), # comment lines first. */
export function writeLateralCsv(e: LateralExport): string {
  const comment = (text: string) => wrapLines(text, 100, '# ');
  return `${[
    `# ${JSON.stringify(e.name)}: lateral leg-spring values exported by Pronk (pronk-policy CSV, format_version 1).`,
    ...comment(`CAUTION: ${e.caution}`),
    ...comment(`provenance: input_file ${baseName(e.file)}; scenario_sha256 ${e.provenance.scenario_sha256}; exported by Pronk ${e.exported.pronk_version} on ${e.exported.date}`),
    ...comment(`float32 values CRC-32 ${hex32(e.crc32)}, covering ${e.crc32_covers}`),
    'name,field,unit,float64,float32',
    ...e.values.map((v) => [v.name.toLowerCase(), v.field, v.unit, v.value.toPrecision(17), v.float32.toPrecision(9)].join(',')),
  ].join('\n')}\n`;
}
