// `pronk map [FILE] [--samples N] [--iterations N] [--approx] [--json]`: the apex return map at the
// scenario's energy, its fixed points with slope, eigenvalues and stance symmetry, and the staircase
// from the start apex.

import { anyScenarioArgument } from './scenario-argument.js';
import type { FixedPointOut, ReturnMapResult } from '../core/analysis/return-map.js';
import { InputError } from '../core/errors.js';
import { type Scenario } from '../core/scenario.js';
import { SAFETY_CAUTION } from '../core/safety.js';
import { jsonText, modelHeader } from '../core/json-output.js';
import type { BipedScenario } from '../core/models/biped.js';
import { PLOT_OPTION, plotOption } from '../core/figures/plot-file.js';
import { checkOutputs, outputRequest, scenarioInput, writePlotFile } from './output-files.js';
import { count, fields, fixed, plain, table, wrap, type Column } from './format.js';
import type { CliIO, Command, ParsedCommandLine } from './command.js';
import { parseIntegerOption } from './options.js';
import { describeAngle, describeStiffness } from './describe.js';

const DEMO_SOURCE = 'scenarios/demo.json';
const SOURCE = 'pronk map';
const TEXT_WIDTH = 96;
export const MAX_MAP_SAMPLES = 100_000;
export const MAX_STAIRCASE_ITERATIONS = 100_000;

export const mapCommand: Command = {
  name: 'map',
  summary: "apex return map at the scenario's energy: fixed points, their stability and eigenvalues, the staircase",
  usage: 'map [FILE] [--samples N] [--iterations N] [--approx] [--plot FILE.svg] [--json]',
  details: [
    'Apex height y -> next apex height on flat ground at height 0 (the scenario\'s terrain is not used),',
    "with the forward speed at every apex from the scenario's start energy. The domain runs from the",
    'touchdown height (leg placement) up to where strides still survive (at most zero speed). Every fixed',
    'point is listed with the slope of the map (stable when |slope| < 1) and the eigenvalues of the 2-D',
    'apex map (height, speed); the staircase iterates the map from the start apex.',
  ].join('\n'),
  arguments: [{ name: 'FILE', description: `scenario file (JSON); without it, the built-in demo (${DEMO_SOURCE})` }],
  options: {
    json: { type: 'boolean', description: 'print the result as JSON on stdout (and nothing else there)' },
    samples: { type: 'string', valueName: 'N', description: 'samples of the map over its domain (default 201), denser near the bottom edge' },
    iterations: { type: 'string', valueName: 'N', description: 'staircase steps from the start apex (default 20)' },
    approx: {
      type: 'boolean',
      description: 'add the closed-form approximate map (Geyer, Seyfarth, Blickhan 2005) beside the exact one',
    },
    plot: PLOT_OPTION,
  },
  maxPositionals: 1,
  run: runMap,
};

async function runMap({ values, positionals }: ParsedCommandLine, io: CliIO): Promise<number> {
  const json = values.json === true;
  const samples = parseIntegerOption(values.samples, '--samples', 2, MAX_MAP_SAMPLES, SOURCE);
  const iterations = parseIntegerOption(values.iterations, '--iterations', 0, MAX_STAIRCASE_ITERATIONS, SOURCE);
  const plot = await plotOption(values.plot);
  const file = positionals[0];
  const [plotFile] = await checkOutputs([outputRequest('--plot', plot)], [scenarioInput(file)], { source: SOURCE });
  const any = await anyScenarioArgument(file, io, 'map');
  if (any.kind === 'lateral') {
    if (samples !== undefined || iterations !== undefined || values.approx === true || plot !== undefined) {
      throw new InputError(
        [{ path: '', expected: '', found: '', message: 'a "lateral" scenario takes no --samples, --iterations, --approx or --plot (they describe the single-leg apex map)' }],
        { source: SOURCE },
      );
    }
    const { runLateralMap } = await import('./lateral.js');
    return runLateralMap(any.scenario, io, { json });
  }
  const scenario = any.scenario;
  if (scenario.model === 'biped') {
    const biped = scenario as BipedScenario;
    if (values.approx === true || plot !== undefined) {
      throw new InputError(
        [{ path: values.approx === true ? '--approx' : '--plot', expected: 'no such option for a two-leg scenario (model "biped")', found: 'the option' }],
        { source: SOURCE },
      );
    }
    const { bipedReturnMap } = await import('../core/analysis/biped-map.js');
    const { renderBipedMap } = await import('./biped.js');
    const result = await bipedReturnMap(biped, {
      ...(samples === undefined ? {} : { samples }),
      ...(iterations === undefined ? {} : { iterations }),
    });
    io.stdout.write(json ? jsonText('map', result, modelHeader(scenario)) : renderBipedMap(biped, result));
    return 0;
  }
  // loaded on demand so that --help and input errors never wait for the WASM engine
  const { apexReturnMap } = await import('../core/analysis/return-map.js');
  let result: ReturnMapResult;
  try {
    result = await apexReturnMap(scenario, {
      ...(samples === undefined ? {} : { samples }),
      ...(iterations === undefined ? {} : { iterations }),
      approx: values.approx === true,
    });
  } catch (error) {
    if (error instanceof InputError && error.source === undefined) throw new InputError(error.issues, { source: SOURCE });
    throw error;
  }
  io.stdout.write(json ? jsonText('map', result) : renderMap(scenario, result));
  if (plotFile !== undefined) await writePlotFile(io, 'map', plotFile, result);
  return 0;
}

// ---------------------------------------------------------------------------------------------
// The terminal view.

const FIXED_POINT_COLUMNS: Column[] = [
  { title: 'apex height', unit: 'm' },
  { title: 'above edge', unit: 'mm' },
  { title: 'speed', unit: 'm/s' },
  { title: 'slope', unit: "P'(y*)" },
  { title: '', unit: '± err' },
  { title: '1-D', unit: 'stable' },
  { title: 'eigenvalues (2-D map)', unit: 'λ1; λ2', align: 'left' },
  { title: 'symmetry', unit: 'Δangle deg', align: 'right' },
];

const STAIRCASE_COLUMNS: Column[] = [
  { title: 'stride', unit: '', align: 'left' },
  { title: 'apex height', unit: 'm' },
  { title: 'next apex', unit: 'm' },
  { title: 'speed', unit: 'm/s' },
  { title: 'status', unit: '', align: 'left' },
];

function eigenText(e: { re: number; im: number }): string {
  if (e.im === 0) return fixed(e.re, 6);
  return `${fixed(e.re, 6)}${e.im < 0 ? '-' : '+'}${fixed(Math.abs(e.im), 6)}i`;
}

function fixedPointRow(f: FixedPointOut): string[] {
  return [
    fixed(f.apex_height_m, 6),
    fixed(f.height_above_edge_m * 1000, 3),
    fixed(f.forward_speed_m_per_s, 4),
    fixed(f.slope, 5),
    f.slope_error.toExponential(1),
    f.stable ? 'yes' : 'no',
    f.eigenvalues.map(eigenText).join('; '),
    f.symmetry ? f.symmetry.angle_residual_deg.toExponential(1) : '-',
  ];
}

export function renderMap(scenario: Scenario, result: ReturnMapResult): string {
  const d = result.domain;
  const lines: string[] = [
    scenario.name ?? 'Unnamed scenario',
    fields([
      ['policy', `${describeAngle(scenario.policy.angle)}; ${describeStiffness(scenario.policy.stiffness, scenario)}`],
      [
        'energy',
        `${fixed(result.energy_J, 3)} J (start apex ${plain(scenario.start.apex_height_m)} m at ${plain(scenario.start.forward_speed_m_per_s)} m/s)` +
          `${result.energy_conserving ? ', conserved by the policy' : ', changed in stance by the policy'}`,
      ],
      ['ground', result.ground_note],
      [
        'domain',
        d.empty
          ? `no sampled stride survives at this energy (legs placeable above ${plain(d.leg_placement_bound_m)} m)`
          : `${fixed(d.low_m, 6)} to ${fixed(d.high_m, 6)} m (legs placeable above ${fixed(d.leg_placement_bound_m, 6)} m; ` +
            `zero speed at ${fixed(d.speed_bound_m, 6)} m${d.high_reason === 'stride_fails' ? '; strides fail above the top' : ''}` +
            `${d.low_reason === 'stride_fails' ? '; strides fail below the bottom' : ''})`,
      ],
      ['samples', `${result.samples.length}, ${count(result.samples.filter((s) => s.next_apex_height_m !== null).length, 'stride')} survive`],
    ]),
    '',
  ];
  if (result.fixed_points.length === 0) {
    lines.push(result.identity_map ? `Fixed points: ${result.fixed_point_note}.` : 'Fixed points: none at this energy.');
  } else {
    lines.push(`Fixed points (${result.fixed_points.length}):`, table(FIXED_POINT_COLUMNS, result.fixed_points.map(fixedPointRow), '  '));
    for (const f of result.fixed_points) {
      if (f.periodic_orbit) {
        const o = f.periodic_orbit;
        lines.push(
          `  from ${fixed(f.apex_height_m, 6)} m: periodic orbit at ${fixed(o.apex_height_m, 6)} m, ${fixed(o.forward_speed_m_per_s, 4)} m/s ` +
            `(energy ${fixed(o.energy_J, 3)} J), eigenvalues ${o.eigenvalues.map(eigenText).join('; ')}: ${o.stable ? 'stable' : 'unstable'}`,
        );
      } else if (f.periodic_orbit_note) {
        lines.push(`  from ${fixed(f.apex_height_m, 6)} m: no periodic orbit found (${f.periodic_orbit_note})`);
      }
    }
    lines.push(wrap(`Note: ${result.fixed_point_note}.`, TEXT_WIDTH, '  ', '  '));
  }
  lines.push('');
  const outcome = result.staircase_outcome;
  // compact: once the apex stops moving at the shown precision, one line stands for the rest
  const anyFailed = result.staircase.some((s) => s.status !== 'completed');
  const columns = anyFailed ? STAIRCASE_COLUMNS : STAIRCASE_COLUMNS.slice(0, 4);
  const rows: (string[] | string)[] = [];
  for (let i = 0; i < result.staircase.length; i++) {
    const s = result.staircase[i];
    const still = s.next_apex_height_m !== null && Math.abs(s.next_apex_height_m - s.apex_height_m) < 5e-7;
    const rest = result.staircase.length - i;
    if (still && rest > 2 && result.staircase.slice(i).every((t) => t.next_apex_height_m !== null && Math.abs(t.next_apex_height_m - t.apex_height_m) < 5e-7)) {
      rows.push(`  ... strides ${i} to ${result.staircase.length - 1}: apex stays at ${fixed(s.apex_height_m, 6)} m (within 1 um)`);
      break;
    }
    const row = [String(i), fixed(s.apex_height_m, 6), fixed(s.next_apex_height_m, 6), fixed(s.forward_speed_m_per_s, 4)];
    if (anyFailed) row.push(s.status === 'completed' ? '' : s.status);
    rows.push(row);
  }
  const settled =
    outcome.settled_after_strides !== null
      ? `settles within ${plain(outcome.settle_tolerance_m * 1000)} mm of ${fixed(outcome.settled_to_m, 6)} m after ${count(outcome.settled_after_strides, 'stride')}`
      : outcome.status === 'failed'
        ? `fails (${outcome.reason}) at step ${outcome.steps - 1}`
        : `does not settle within ${plain(outcome.settle_tolerance_m * 1000)} mm of a stable fixed point in ${count(outcome.steps, 'step')}`;
  lines.push(`Staircase from the start apex: ${settled}.`);
  if (rows.length) lines.push(table(columns, rows, '  '));
  if (result.approximate) {
    const a = result.approximate;
    lines.push(
      '',
      wrap(`Approximate map: ${a.method}.`, TEXT_WIDTH),
      `  largest |approximate - exact| next apex: ${a.max_abs_error_m === null ? '-' : `${fixed(a.max_abs_error_m * 1000, 3)} mm at ${fixed(a.max_abs_error_at_m, 4)} m`} (${a.compared_samples} samples compared)`,
      a.fixed_points.length
        ? `  fixed points: ${a.fixed_points.map((f) => `${fixed(f.apex_height_m, 6)} m (slope ${fixed(f.slope, 4)}, ${f.stable ? 'stable' : 'unstable'})`).join(', ')}`
        : '  fixed points: none',
    );
  }
  lines.push('', wrap(SAFETY_CAUTION, TEXT_WIDTH, 'Caution: ', '  '), '');
  return lines.join('\n');
}
