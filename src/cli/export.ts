// `pronk export RESULT|SCENARIO --format c|json|csv --out PATH [--points N | --max-error E]
// [--max-stiffness-error K] [--uniform] [--t-max S] [--prefix NAME] [--force] [--json]`:
// a policy written as tables firmware can run (src/core/export/).

import { InputError, describeFound } from '../core/errors.js';
import { LATERAL_HEADER, jsonText, modelHeader } from '../core/json-output.js';
import { buildExport, describeGrid, EXPORT_CAUTION, T_MAX_RANGE_S, type PolicyExport } from '../core/export/build.js';
import { checkPrefix, defaultPrefix, isCSourceOf, writeC } from '../core/export/c99.js';
import { writeCsv } from '../core/export/csv.js';
import { looksLikeResult, readExportSource } from '../core/export/input.js';
import { writeJson } from '../core/export/json.js';
import { hex32 } from '../core/export/lookup.js';
import { MAX_POINTS, type GridRequest } from '../core/export/sample.js';
import { fields, plain, wrap } from './format.js';
import type { CliIO, Command, ParsedCommandLine } from './command.js';
import { parseIntegerOption, parseNumberOption } from './options.js';
import { checkOutputs, writeOutputs } from './output-files.js';

const SOURCE = 'pronk export';
const FORMATS = ['c', 'json', 'csv'] as const;
type Format = (typeof FORMATS)[number];
const TEXT_WIDTH = 96;

export const exportCommand: Command = {
  name: 'export',
  summary: 'write a policy as tables firmware runs: C99 header and source, JSON or CSV',
  usage:
    'export RESULT|SCENARIO --format c|json|csv --out PATH [--points N | --max-error E] [--max-stiffness-error K] ' +
    '[--uniform] [--t-max S] [--legs shared|per-leg] [--prefix NAME] [--force] [--json]',
  details: [
    'Tabulates the policy on the time since the flight apex: the attack angle as time passes and, when the policy',
    'schedules the stiffness, the compression and extension stiffness by touchdown time. The grid runs from 0 to t_max:',
    "an angle table's last knot; for a fixed or retraction angle the latest touchdown from the start apex onto ground one",
    'leg length below the first ground (cut where a retraction leaves 0-90 deg); at least a stiffness table\'s last knot.',
    '',
    "By default the grid holds the policy's breakpoints (table knots, retraction clamps), which makes it exact for every",
    'policy kind; --points N adds N evenly spaced points (ends included), --max-error E the fewest evenly spaced points',
    'whose table is within E of the continuous policy (deg for the angle; N/m for stiffness, or K with',
    '--max-stiffness-error). --uniform leaves the breakpoints out: an evenly spaced grid with a real interpolation error.',
    'The report gives the interpolation error found by a dense check, for the float64 table and for the float32 lookup.',
    '',
    '--format c writes PATH (a .h header: macros, declarations, the caution, provenance, units) and the .c beside it',
    '(the float32 tables and the lookups); identifiers start with --prefix (default from the scenario name). --format',
    'json writes the full-precision policy (format pronk-policy), --format csv one row per grid point.',
    '',
    'Every exported number (table entries, grid times, macros) is checked once rounded to float32: finite, within its',
    'physical range (angles in (0, 90] deg, times, stiffnesses, mass, leg length and gravity > 0) and not flushed to zero',
    'or below the float32 normal range; a number that fails is refused (exit 2) naming it, and --force never writes it.',
    'A result whose constraint margins are negative is refused unless --force, which writes anyway and marks every file.',
    '',
    'Files are written through temporary files and renamed once all are complete: never half an export. PATH may not be',
    'the input file (links resolved); with --format c an existing .c beside PATH is replaced only when it is an earlier',
    'export of the same header, or with --force.',
  ].join('\n'),
  arguments: [{ name: 'RESULT|SCENARIO', description: 'a result file (format pronk-result: optimization or deadbeat) or a scenario file' }],
  options: {
    format: { type: 'string', valueName: 'c|json|csv', description: 'what to write (required)' },
    out: { type: 'string', valueName: 'PATH', description: 'file to write (required); with --format c the header, ending in .h (the .c goes beside it)' },
    points: { type: 'string', valueName: 'N', description: `evenly spaced grid points, 2 to ${MAX_POINTS} (default 2: the ends, plus the breakpoints)` },
    'max-error': { type: 'string', valueName: 'E', description: 'the fewest evenly spaced points whose table is within E (deg for the angle, N/m for stiffness)' },
    'max-stiffness-error': { type: 'string', valueName: 'K', description: 'with --max-error: the bound for the stiffness tables instead, N/m' },
    uniform: { type: 'boolean', description: "evenly spaced points only (leave out the policy's breakpoints); needs --points or --max-error" },
    't-max': { type: 'string', valueName: 'S', description: `end of the time axis, s since apex (${T_MAX_RANGE_S[0]} to ${T_MAX_RANGE_S[1]})` },
    legs: { type: 'string', valueName: 'shared|per-leg', description: 'two-leg scenarios: one table set for both legs (shared, the default) or one per leg (per-leg)' },
    prefix: { type: 'string', valueName: 'NAME', description: 'with --format c: prefix of every C identifier, a lowercase C identifier' },
    force: {
      type: 'boolean',
      description: 'write despite negative constraint margins (the files say so); with --format c, also replace an existing .c that is not an earlier export',
    },
    json: { type: 'boolean', description: 'print a report of what was written as JSON on stdout (and nothing else there)' },
  },
  maxPositionals: 1,
  run: runExport,
};

interface ExportFlags {
  format: Format;
  out: string;
  grid: GridRequest | undefined;
  uniform: boolean;
  tMax: number | undefined;
  prefix: string | undefined;
  force: boolean;
  /** Two-leg scenarios: --legs shared|per-leg. */
  legs: 'shared' | 'per_leg' | undefined;
}

function issue(path: string, expected: string, found: unknown): InputError {
  return new InputError([{ path, expected, found: typeof found === 'string' && found.startsWith('--') ? found : describeFound(found) }], { source: SOURCE });
}

export function parseExportFlags(values: ParsedCommandLine['values']): ExportFlags {
  const format = values.format;
  if (format === undefined) throw issue('--format', `one of ${FORMATS.join(', ')} (required)`, undefined);
  if (typeof format !== 'string' || !(FORMATS as readonly string[]).includes(format)) throw issue('--format', `one of ${FORMATS.join(', ')}`, format);
  const out = values.out;
  if (out === undefined) throw issue('--out', 'the file to write (required)', undefined);
  if (typeof out !== 'string' || out.trim() === '') throw issue('--out', 'a file name', out);
  if (format === 'c') {
    const base = out.split(/[\\/]/).pop() ?? '';
    if (!/^[A-Za-z0-9_][A-Za-z0-9_.+-]*\.h$/.test(base)) {
      throw issue('--out', 'a header file name ending in .h, of letters, digits, _ . + - (the .c is written beside it)', out);
    }
  }
  const points = parseIntegerOption(values.points, '--points', 2, MAX_POINTS, SOURCE);
  const maxError = parseNumberOption(values['max-error'], '--max-error', 'a bound > 0 (deg for the angle, N/m for stiffness)', SOURCE, (v) => v > 0);
  const maxStiffness = parseNumberOption(values['max-stiffness-error'], '--max-stiffness-error', 'a bound > 0 (N/m)', SOURCE, (v) => v > 0);
  if (points !== undefined && maxError !== undefined) {
    throw issue('--points', 'either --points or --max-error, not both', `--points ${values.points} and --max-error ${values['max-error']}`);
  }
  if (maxStiffness !== undefined && maxError === undefined) throw issue('--max-stiffness-error', 'to come with --max-error', `--max-stiffness-error ${values['max-stiffness-error']} alone`);
  const uniform = values.uniform === true;
  if (uniform && points === undefined && maxError === undefined) throw issue('--uniform', 'to come with --points N or --max-error E', '--uniform alone');
  const tMax = parseNumberOption(values['t-max'], '--t-max', `a time from ${T_MAX_RANGE_S[0]} to ${T_MAX_RANGE_S[1]} s`, SOURCE, (v) => v >= T_MAX_RANGE_S[0] && v <= T_MAX_RANGE_S[1]);
  const prefix = values.prefix;
  if (prefix !== undefined) {
    if (format !== 'c') throw issue('--prefix', 'only with --format c (it names the C identifiers)', `--prefix with --format ${format}`);
    if (typeof prefix !== 'string') throw issue('--prefix', 'a lowercase C identifier', prefix);
    try {
      checkPrefix(prefix, '--prefix');
    } catch (error) {
      if (error instanceof InputError) throw new InputError(error.issues, { source: SOURCE });
      throw error;
    }
  }
  const grid: GridRequest | undefined =
    points !== undefined
      ? { by: 'points', points }
      : maxError !== undefined
        ? { by: 'max_error', max_error_deg: maxError, max_error_N_per_m: maxStiffness ?? maxError }
        : undefined;
  const legs = values.legs;
  if (legs !== undefined && legs !== 'shared' && legs !== 'per-leg') throw issue('--legs', 'shared or per-leg', legs);
  return {
    format: format as Format,
    out,
    grid,
    uniform,
    tMax,
    prefix: prefix as string | undefined,
    force: values.force === true,
    legs: legs === undefined ? undefined : legs === 'per-leg' ? ('per_leg' as const) : ('shared' as const),
  };
}

interface Written {
  path: string;
  bytes: number;
  contents: string;
}

async function runExport({ values, positionals }: ParsedCommandLine, io: CliIO): Promise<number> {
  const json = values.json === true;
  const flags = parseExportFlags(values);
  const file = positionals[0];
  if (file === undefined) throw issue('RESULT|SCENARIO', 'a result or scenario file to export', undefined);
  // Both files of a C export are checked before anything is read: the .c goes beside the named .h,
  // and an existing .c is replaced only when it is an earlier export of that header, or with --force.
  const headerName = flags.out.split(/[\\/]/).pop()!;
  const sourcePath = flags.out.replace(/\.h$/, '.c');
  const outputs = await checkOutputs(
    [
      { option: '--out', path: flags.out },
      flags.format === 'c'
        ? {
            option: '--out',
            path: sourcePath,
            beside: flags.out,
            mayReplace: (text: string) => isCSourceOf(text, headerName),
            forceAlso: 'writes a policy whose constraint margins are negative, marked as forced',
          }
        : undefined,
    ],
    [{ path: file, what: 'the input file' }],
    { force: flags.force, source: SOURCE },
  );
  // a lateral scenario: the chosen values, no tables (src/core/export/lateral.ts)
  const { readInputFile } = await import('../core/input-file.js');
  const { modelKindOf } = await import('../core/models/kind.js');
  const raw = await readInputFile(file, 'result or scenario file');
  if (!looksLikeResult(raw) && modelKindOf(raw, file) === 'lateral') {
    return exportLateral(raw, file, flags, outputs, headerName, io, json);
  }
  if (looksLikeResult(raw) && (raw as { model?: unknown }).model === 'lateral') {
    // the lateral export writes a scenario's chosen values; a lateral study's result file is not read yet
    throw issue(
      'FILE',
      'a lateral scenario file (pronk export reads the result files of single-leg and two-leg studies; for a lateral study, write the result\'s "scenario" to a file and export that)',
      `a result file of a lateral study (${file})`,
    );
  }
  const source = await readExportSource(file);
  let exported: PolicyExport;
  try {
    exported = buildExport(source, {
      ...(flags.grid ? { grid: flags.grid } : {}),
      mode: flags.uniform ? 'uniform' : 'breakpoints',
      ...(flags.tMax === undefined ? {} : { t_max_s: flags.tMax }),
      force: flags.force,
      ...(flags.legs === undefined ? {} : { legs: flags.legs }),
      names: { points: '--points', max_error: '--max-error', max_stiffness_error: '--max-stiffness-error', t_max: '--t-max', legs: '--legs' },
    });
  } catch (error) {
    if (error instanceof InputError && error.source === undefined) throw new InputError(error.issues, { source: SOURCE });
    throw error;
  }
  const prefix = flags.format === 'c' ? (flags.prefix ?? defaultPrefix(source.scenario.name)) : undefined;
  const files: { text: string; contents: string }[] = [];
  if (flags.format === 'c') {
    const c = writeC(exported, prefix!, headerName);
    files.push({ text: c.header, contents: 'C99 header: macros, declarations, caution, provenance, units' });
    files.push({ text: c.source, contents: 'C99 source: float32 tables, lookups, checksum' });
  } else if (flags.format === 'json') {
    files.push({ text: writeJson(exported), contents: 'JSON (format pronk-policy): the policy at full precision, float32 tables, grid, provenance' });
  } else {
    files.push({ text: writeCsv(exported), contents: 'CSV: one row per grid point, float64, # comment lines' });
  }
  // all or nothing: never a header without its source
  await writeOutputs(files.map((f, i) => ({ output: outputs[i]!, text: f.text })), { source: SOURCE });
  const written: Written[] = files.map((f, i) => ({ path: outputs[i]!.path, bytes: Buffer.byteLength(f.text, 'utf8'), contents: f.contents }));
  const report = exportReport(exported, flags.format, written, prefix);
  io.stdout.write(json ? jsonText('export', report, modelHeader(source.scenario)) : renderExport(exported, flags.format, written, prefix));
  return 0;
}

export function exportReport(e: PolicyExport, format: Format, written: Written[], prefix: string | undefined) {
  const axis = e.grid.axes[0].points;
  return {
    file_format: format, // `format` is the report's own (pronk-export)
    written,
    ...(prefix === undefined ? {} : { prefix }),
    ...(e.legs === null ? {} : { legs: e.legs }), // two-leg exports: shared or per_leg tables
    source: {
      file: e.source.file,
      kind: e.source.kind,
      result_sha256: e.source.provenance.result_sha256,
      scenario_sha256: e.source.provenance.scenario_sha256,
      scenario_sha256_matches: e.source.provenance.scenario_sha256_matches,
    },
    grid: {
      points: axis.length,
      even_points: e.grid.even_points,
      mode: e.grid.mode,
      breakpoints: e.grid.breakpoints.length,
      t_max_s: e.grid.t_max_s,
      t_max_source: e.grid.t_max_source,
      search: e.grid.search,
    },
    tables: e.tables.map((t) => ({
      name: t.name,
      column: t.column,
      unit: t.unit,
      c_unit: t.unit === 'deg' ? 'rad' : 'N/m',
      interpolation_error: {
        float64_max_abs: t.float64_error.max_abs,
        float64_at_time_since_apex_s: t.float64_error.at_time_since_apex_s,
        float32_max_abs: t.float32_error.max_abs,
        float32_at_time_since_apex_s: t.float32_error.at_time_since_apex_s,
      },
    })),
    checksum_crc32: hex32(e.crc32),
    checksum_covers: e.crc32_covers,
    forced: e.forced,
    forced_over: e.problems,
    caution: EXPORT_CAUTION,
  };
}

const FORMAT_NAMES: Record<Format, string> = { c: 'C99', json: 'JSON (pronk-policy)', csv: 'CSV' };

export function renderExport(e: PolicyExport, format: Format, written: Written[], prefix: string | undefined): string {
  const kind = e.source.kind === 'scenario' ? 'scenario file' : `${e.source.kind} result file`;
  const rows: [string, string][] = [
    ['wrote', written.map((w) => `${w.path} (${w.bytes} bytes)`).join(', ')],
    ...(prefix === undefined ? [] : [['prefix', `${prefix} (macros ${prefix.toUpperCase()}_...)`] as [string, string]]),
    ['grid', describeGrid(e)],
    ...e.tables.map(
      (t): [string, string] => [
        t.name,
        `interpolation error ${plain(t.float64_error.max_abs)} ${t.unit} (float64 table, at t = ${plain(t.float64_error.at_time_since_apex_s)} s), ` +
          `${plain(t.float32_error.max_abs)} ${t.unit} as looked up in float32 (at t = ${plain(t.float32_error.at_time_since_apex_s)} s)`,
      ],
    ),
    ['checksum', `CRC-32 ${hex32(e.crc32)} of the float32 tables${prefix === undefined ? '' : ` (${prefix}_tables_checksum() returns it)`}`],
  ];
  const notes: string[] = [];
  if (!e.source.provenance.scenario_sha256_matches) {
    notes.push('Warning: the result file\'s scenario_sha256 is not the hash of its scenario (the file was edited after it was made).');
  }
  if (e.forced) notes.push(`FORCED EXPORT (--force): written although ${e.problems.join('; ')}. The files say so.`);
  return [
    `Exported ${JSON.stringify(e.name)} (${kind} ${e.source.file}) as ${FORMAT_NAMES[format]}`,
    fields(rows),
    '',
    ...notes.map((n) => wrap(n, TEXT_WIDTH)),
    ...(notes.length ? [''] : []),
    wrap(EXPORT_CAUTION, TEXT_WIDTH, 'Caution: ', '  '),
    '',
  ].join('\n');
}

// The lateral leg-spring export: values only (its policy has no schedule to tabulate).
async function exportLateral(
  raw: unknown,
  file: string,
  flags: ExportFlags,
  outputs: Awaited<ReturnType<typeof checkOutputs>>,
  headerName: string,
  io: CliIO,
  json: boolean,
): Promise<number> {
  const tableOptions: [string, boolean][] = [
    ['--points', flags.grid?.by === 'points'],
    ['--max-error', flags.grid?.by === 'max_error'],
    ['--uniform', flags.uniform],
    ['--t-max', flags.tMax !== undefined],
    ['--legs', flags.legs !== undefined],
  ];
  for (const [option, given] of tableOptions) {
    if (given) throw issue(option, 'none with a "lateral" scenario (its export writes the chosen values: no tables, no grid)', option);
  }
  const { parseLateralScenario } = await import('../core/models/lateral.js');
  const { buildLateralExport, writeLateralC, writeLateralCsv, writeLateralJson } = await import('../core/export/lateral.js');
  const scenario = parseLateralScenario(raw, { source: file });
  const e = await buildLateralExport(scenario, file, raw);
  const prefix = flags.format === 'c' ? (flags.prefix ?? defaultPrefix(scenario.name)) : undefined;
  const files: { text: string; contents: string }[] = [];
  if (flags.format === 'c') {
    const c = writeLateralC(e, prefix!, headerName);
    files.push({ text: c.header, contents: 'C99 header: the values as macros, caution, provenance, units' });
    files.push({ text: c.source, contents: 'C99 source: the float32 values and their checksum' });
  } else if (flags.format === 'json') {
    files.push({ text: writeLateralJson(e), contents: 'JSON (format pronk-policy, model lateral): the values in float64 and float32, provenance' });
  } else {
    files.push({ text: writeLateralCsv(e), contents: 'CSV: one row per value, float64 and float32, # comment lines' });
  }
  await writeOutputs(files.map((f, i) => ({ output: outputs[i]!, text: f.text })), { source: SOURCE });
  const written: Written[] = files.map((f, i) => ({ path: outputs[i]!.path, bytes: Buffer.byteLength(f.text, 'utf8'), contents: f.contents }));
  const report = {
    file_format: flags.format,
    written,
    ...(prefix === undefined ? {} : { prefix }),
    source: { file, kind: 'scenario', result_sha256: e.provenance.result_sha256, scenario_sha256: e.provenance.scenario_sha256 },
    values: Object.fromEntries(e.values.map((v) => [v.name.toLowerCase(), v.float32])),
    checksum_crc32: hex32(e.crc32),
    caution: e.caution,
  };
  if (json) io.stdout.write(jsonText('export', report, LATERAL_HEADER));
  else {
    io.stdout.write(
      [
        `Exported the lateral values of ${JSON.stringify(e.name)} (${flags.format}): ${written.map((w) => `${w.path} (${w.bytes} bytes)`).join(', ')}`,
        ...e.values.map((v) => `  ${v.name.toLowerCase().padEnd(34)} ${String(Number(v.float32.toPrecision(9))).padStart(14)} ${v.unit}`),
        `  values CRC-32 ${hex32(e.crc32)}`,
        '',
        wrap(e.caution, TEXT_WIDTH, 'Caution: ', '  '),
        '',
      ].join('\n'),
    );
  }
  return 0;
}
