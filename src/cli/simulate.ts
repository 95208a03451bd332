// `pronk simulate [FILE] [--json] [--strides N] [--trace-interval S]`: one rollout of a scenario, shown stride by stride.

import { anyScenarioArgument } from './scenario-argument.js';
import { decimalDigits, decimalNumber } from '../core/decimal.js';
import { InputError, describeFound } from '../core/errors.js';
import { expectedDecimal } from './options.js';
import { SAFETY_CAUTION } from '../core/safety.js';
import {
  MAX_STRIDES,
  type Scenario,
} from '../core/scenario.js';
import type { SimulationResult } from '../core/simulate.js';
import { jsonTextChunks, modelHeader } from '../core/json-output.js';
import type { BipedScenario } from '../core/models/biped.js';
import { writeChunks } from './stream-output.js';
import { accuracyFields, count, fields, fixed, plain, table, wrap, type Column } from './format.js';
import type { CliIO, Command, ParsedCommandLine } from './command.js';
import { describeAngle, describeStiffness, describeTerrain } from './describe.js';

const DEMO_SOURCE = 'scenarios/demo.json';

export const simulateCommand: Command = {
  name: 'simulate',
  summary: 'run a scenario stride by stride: apexes, touchdowns, leg forces and the outcome',
  usage: 'simulate [FILE] [--json] [--strides N] [--trace-interval S]',
  arguments: [{ name: 'FILE', description: `scenario file (JSON); without it, the built-in demo (${DEMO_SOURCE})` }],
  options: {
    json: { type: 'boolean', description: 'print the result as JSON on stdout (and nothing else there)' },
    strides: { type: 'string', valueName: 'N', description: "run N strides instead of the scenario's \"strides\"" },
    'trace-interval': {
      type: 'string',
      valueName: 'S',
      description: 'with --json, add a "trajectory": body, foot and leg force sampled every S seconds (plus touchdown and liftoff)',
    },
  },
  maxPositionals: 1,
  run: runSimulate,
};

async function runSimulate({ values, positionals }: ParsedCommandLine, io: CliIO): Promise<number> {
  const json = values.json === true;
  const strides = parseStridesOption(values.strides);
  const traceInterval = parseTraceIntervalOption(values['trace-interval']);
  const file = positionals[0];
  const any = await anyScenarioArgument(file, io, 'simulate');
  if (any.kind === 'lateral') {
    const { runLateralSimulate } = await import('./lateral.js');
    return runLateralSimulate(any.scenario, io, { json, strides, traceInterval });
  }
  const scenario = any.scenario;
  if (scenario.model === 'biped') {
    const biped = scenario as BipedScenario;
    const { simulateBiped } = await import('../core/models/biped-simulate.js');
    const { renderBipedSimulation } = await import('./biped.js');
    const result = await simulateBiped(biped, {
      ...(strides === undefined ? {} : { strides }),
      ...(traceInterval === undefined || !json ? {} : { traceInterval_s: traceInterval }),
    });
    if (json) await writeChunks(io.stdout, jsonTextChunks('simulate', result, modelHeader(scenario)));
    else io.stdout.write(renderBipedSimulation(biped, result, strides ?? scenario.strides));
    return 0;
  }
  // loaded on demand so that --help and input errors never wait for the WASM engine
  const { simulate } = await import('../core/simulate.js');
  const result = await simulate(scenario, {
    ...(strides === undefined ? {} : { strides }),
    ...(traceInterval === undefined || !json ? {} : { traceInterval_s: traceInterval }),
  });
  if (json) {
    // in pieces: the documented 1 000 000 strides make about 1 GB of JSON, more than one string holds
    await writeChunks(io.stdout, jsonTextChunks('simulate', result));
  } else {
    io.stdout.write(renderSimulation(scenario, result, { stridesRequested: strides ?? scenario.strides }));
  }
  return 0;
}

export function parseStridesOption(value: string | boolean | undefined): number | undefined {
  if (value === undefined || typeof value === 'boolean') return undefined;
  const issue = (expected: string) =>
    new InputError([{ path: '--strides', expected: expectedDecimal(expected, value, true), found: describeFound(value) }], { source: 'pronk simulate' });
  const strides = decimalDigits(value);
  if (!(strides >= 1)) throw issue('a positive integer');
  if (strides > MAX_STRIDES) throw issue(`a positive integer no larger than ${MAX_STRIDES}`);
  return strides;
}

// Trace sample spacing: a positive number of seconds, at least 1e-5 s (100 kHz is far finer than
// any plot needs and keeps the sample buffer bounded).
export function parseTraceIntervalOption(value: string | boolean | undefined): number | undefined {
  if (value === undefined || typeof value === 'boolean') return undefined;
  const interval = decimalNumber(value);
  if (!Number.isFinite(interval) || interval < 1e-5 || interval > 10) {
    throw new InputError(
      [{ path: '--trace-interval', expected: expectedDecimal('a time step in seconds from 1e-5 to 10', value), found: describeFound(value) }],
      { source: 'pronk simulate' },
    );
  }
  return interval;
}

// ---------------------------------------------------------------------------------------------
// The terminal view: what was run, one row per stride, the outcome, the caution.

const MAX_ROWS_SHOWN = 60; // past this many strides, show the first and last ones only
const HEAD_ROWS = 40;
const TAIL_ROWS = 10;
const TEXT_WIDTH = 96;

const STRIDE_COLUMNS: Column[] = [
  { title: 'stride', unit: '', align: 'left' },
  { title: 'apex height', unit: 'm' },
  { title: 'speed', unit: 'm/s' },
  { title: 'attack', unit: 'deg' },
  { title: 'ground', unit: 'm' },
  { title: 'contact', unit: 'ms' },
  { title: 'stride', unit: 'ms' },
  { title: 'peak force', unit: 'N' },
  { title: '', unit: 'x weight' },
  { title: 'compression', unit: 'max mm' },
  { title: '', unit: '% leg' },
  { title: 'friction', unit: '|Fx/Fy|' },
];

export function renderSimulation(
  scenario: Scenario,
  result: SimulationResult,
  options: { stridesRequested?: number } = {},
): string {
  const { body } = scenario;
  const weight = body.mass_kg * body.gravity_m_per_s2;
  const stridesRequested = options.stridesRequested ?? scenario.strides;

  const header = [
    scenario.name ?? 'Unnamed scenario',
    fields([
      ['body', describeBody(scenario)],
      ['policy', `${describeAngle(scenario.policy.angle)}; ${describeStiffness(scenario.policy.stiffness, scenario)}`],
      ['terrain', describeTerrain(scenario.terrain)],
      [
        'start',
        `apex ${plain(scenario.start.apex_height_m)} m at ${plain(scenario.start.forward_speed_m_per_s)} m/s, ` +
          `energy ${fixed(result.energy_J, 2)} J; ${count(stridesRequested, 'stride')} requested`,
      ],
      ...accuracyFields(result.integrator),
    ]),
  ].join('\n');

  // The start apex, then per stride its touchdown and stance and the apex it reaches.
  const start = result.apexes[0];
  const rows: (string[] | string)[] = [
    ['start', fixed(start?.height_m, 4), fixed(start?.forward_speed_m_per_s, 3), ...new Array(9).fill('')],
  ];
  const strideRows = result.strides.map((stride, i) => {
    const apex = result.apexes[i + 1];
    return [
      String(stride.index),
      fixed(apex?.height_m, 4),
      fixed(apex?.forward_speed_m_per_s, 3),
      fixed(stride.attack_deg, 2),
      fixed(stride.ground_height_m, 4),
      fixed(stride.contact_s * 1000, 1),
      fixed(stride.stride_s * 1000, 1),
      fixed(stride.peak_leg_force_N, 1),
      fixed(stride.peak_leg_force_N / weight, 2),
      fixed(stride.max_compression_m * 1000, 1),
      fixed((stride.max_compression_m / body.leg_length_m) * 100, 1),
      fixed(stride.peak_friction_ratio, 3),
    ];
  });
  if (strideRows.length > MAX_ROWS_SHOWN) {
    const left = strideRows.length - HEAD_ROWS - TAIL_ROWS;
    rows.push(
      ...strideRows.slice(0, HEAD_ROWS),
      `... ${count(left, 'stride')} not shown (--json lists every stride) ...`,
      ...strideRows.slice(-TAIL_ROWS),
    );
  } else {
    rows.push(...strideRows);
  }

  const caution = wrap(SAFETY_CAUTION, TEXT_WIDTH, 'Caution: ', '  ');
  return [header, '', table(STRIDE_COLUMNS, rows), '', describeOutcome(result), '', caution, ''].join('\n');
}

function describeOutcome({ outcome }: SimulationResult): string {
  const completed = count(outcome.strides_completed, 'stride');
  if (outcome.status === 'completed') return `Outcome: completed ${completed}.`;
  const failedAt = outcome.failed_stride ?? outcome.strides_completed;
  const code = outcome.reason ? ` (${outcome.reason})` : '';
  const detail = (outcome as { detail?: string | null }).detail;
  return `Outcome: failed at stride ${failedAt}${code}${detail ? `: ${detail}` : ''}; ${completed} completed.`;
}

function describeBody({ body }: Scenario): string {
  const parts = [
    `${plain(body.mass_kg)} kg`,
    `leg ${plain(body.leg_length_m)} m`,
    `stiffness ${plain(body.leg_stiffness_N_per_m)} N/m`,
    `gravity ${plain(body.gravity_m_per_s2)} m/s^2`,
    body.leg_damping_N_s_per_m > 0 ? `leg damping ${plain(body.leg_damping_N_s_per_m)} N s/m` : 'no leg damping',
  ];
  return parts.join(', ');
}

