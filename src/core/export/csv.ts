// The CSV export: one row per grid point, float64 values in file units with 17 significant
// digits (enough for any double to read back to the same bits: IEEE 754-2008 §5.12.2), a header
// row naming each column with its unit. Lines starting with `#` before the header are comments:
// what the file is, the caution, provenance, the body, the continuous policy, the grid and its
// interpolation error (most CSV readers skip them with a comment option, e.g. pandas
// `comment="#"`). buildExport refuses every non-finite number before this writer runs.

import { InputError } from '../errors.js';
import { describeGrid, describePolicy, wrapLines, type PolicyExport } from './build.js';
import { baseName } from './c99.js';
import { hex32 } from './lookup.js';
import { isBiped, LEG_NAMES, legParameters } from '../models/biped.js';

/** 17 significant digits (a non-finite number here is a bug: buildExport refuses them). */
export function csvNumber(x: number): string {
  if (!Number.isFinite(x)) throw new Error(`csvNumber: a non-finite number (${x}) reached the CSV writer`);
  return x.toPrecision(17);
}

// null: a constraint not measured (buildExport refuses those, so no written file holds one)
const fmt = (x: number | null) => (x === null ? 'not measured' : Number.isFinite(x) ? String(Number(x.toPrecision(6))) : String(x));

export function writeCsv(e: PolicyExport): string {
  const prov = e.source.provenance;
  const body = e.source.scenario.body;
  const start = e.source.scenario.start;
  const comment = (text: string) => wrapLines(text, 100, '# ');
  const lines: string[] = [
    `# ${JSON.stringify(e.name)}: policy table exported by Pronk (pronk-policy CSV, format_version 1).`,
    '# One row per grid point; float64 values, 17 significant digits. Lines starting with # are comments.',
    ...comment(`CAUTION: ${e.caution}`),
    ...(e.forced ? [...comment('FORCED EXPORT: written with --force although:'), ...e.problems.flatMap((p) => comment(`- ${p}`))] : []),
    ...comment(
      `provenance: input_file ${baseName(e.source.file)} (${e.source.kind}); result_sha256 ${prov.result_sha256} ` +
        "(SHA-256 of the input file's canonical JSON); " +
        `scenario_sha256 ${prov.scenario_sha256}${prov.scenario_sha256_matches ? '' : ' (does NOT match the scenario in the file)'}; ` +
        `${prov.source_pronk_version !== null ? `made by Pronk ${prov.source_pronk_version} on ${prov.source_date}; ` : ''}` +
        `exported by Pronk ${e.exported.pronk_version} on ${e.exported.date}`,
    ),
    ...comment(
      `body: mass_kg ${fmt(body.mass_kg)}, leg_length_m ${fmt(body.leg_length_m)}, leg_stiffness_N_per_m ${fmt(body.leg_stiffness_N_per_m)}, ` +
        `gravity_m_per_s2 ${fmt(body.gravity_m_per_s2)}, leg_damping_N_s_per_m ${fmt(body.leg_damping_N_s_per_m)}; ` +
        `start: apex_height_m ${fmt(start.apex_height_m)}, forward_speed_m_per_s ${fmt(start.forward_speed_m_per_s)}`,
    ),
    ...(e.legs !== null && isBiped(e.source.scenario)
      ? comment(
          `two legs (${e.legs === 'per_leg' ? 'one column set per leg' : 'one column set for both legs; a leg\'s stiffness is the table or constant times its stiffness_scale'}): ` +
            legParameters(e.source.scenario)
              .map((leg, i) => `${LEG_NAMES[i]} leg_length_m ${fmt(leg.length_m)}, stiffness_scale ${fmt(leg.stiffness_scale)}, leg_damping_N_s_per_m ${fmt(leg.damping_N_s_per_m)}`)
              .join('; ') +
            `; time_since_apex_s is s since the ${e.source.scenario.start.gait === 'walking' ? 'single-support' : 'flight'} apex`,
        )
      : []),
    ...comment(`policy (continuous, as simulated): ${describePolicy(e.source.policy)}`),
    ...comment(
      e.source.constraints === null
        ? 'constraints: none given'
        : `constraints: ${e.source.constraints.map((c) => `${c.name} value ${fmt(c.value)} limit ${fmt(c.limit)} margin ${fmt(c.margin)}`).join('; ') || 'none'}`,
    ),
    ...comment(`grid: ${describeGrid(e)}; linear interpolation, held flat outside the grid`),
    ...comment(
      `interpolation error against the continuous policy: ${e.tables
        .map((t) => `${t.column} ${fmt(t.float64_error.max_abs)} ${t.unit} at t = ${fmt(t.float64_error.at_time_since_apex_s)} s (float64), ${fmt(t.float32_error.max_abs)} ${t.unit} as float32`)
        .join('; ')}`,
    ),
    ...comment(`float32 tables CRC-32 ${hex32(e.crc32)}, covering ${e.crc32_covers}`),
    ['time_since_apex_s', ...e.specs.map((s) => s.column)].join(','),
  ];
  const axis = e.grid.axes[0].points;
  axis.forEach((t, j) => lines.push([t, ...e.grid.values.map((v) => v[j])].map(csvNumber).join(',')));
  return `${lines.join('\n')}\n`;
}

/** Reads a Pronk CSV back: the columns by name (comment lines skipped). */
export function readCsv(text: string, source = 'csv'): Record<string, number[]> {
  const rows = text.split(/\r?\n/).filter((l) => l !== '' && !l.startsWith('#'));
  if (rows.length === 0) throw new InputError([{ path: '', expected: 'a header row', found: 'no rows' }], { source });
  const header = rows[0].split(',');
  const columns: Record<string, number[]> = Object.fromEntries(header.map((h) => [h, []]));
  rows.slice(1).forEach((row, i) => {
    const cells = row.split(',');
    if (cells.length !== header.length) {
      throw new InputError([{ path: `row ${i + 1}`, expected: `${header.length} cells`, found: `${cells.length} cells` }], { source });
    }
    cells.forEach((cell, k) => columns[header[k]].push(Number(cell)));
  });
  return columns;
}
