// `pronk stepdown [FILE] [--after N] [--resolution M]`: the largest single permanent drop and rise
// of the ground, met at the first touchdown, that the policy survives for N further strides.

import { scenarioArgument } from './scenario-argument.js';
import { InputError } from '../core/errors.js';
import type { StepDirectionResult, StepToleranceOptionNames, StepToleranceResult } from '../core/analysis/stepdown.js';
import { DEFAULT_AFTER, DEFAULT_GRID_M, DEFAULT_RESOLUTION_M, DEFAULT_SETTLE_STRIDES, MAX_AFTER, MAX_GRID_POINTS, MAX_SETTLE_STRIDES } from '../core/analysis/stepdown.js';
import { SAFETY_CAUTION } from '../core/safety.js';
import { jsonText, modelHeader } from '../core/json-output.js';
import type { Scenario } from '../core/scenario.js';
import { count, fields, fixed, plain, table, wrap, type Column } from './format.js';
import type { CliIO, Command, ParsedCommandLine } from './command.js';
import { parseIntegerOption, parseNumberOption } from './options.js';
import { describeAngle, describeStiffness } from './describe.js';

const DEMO_SOURCE = 'scenarios/demo.json';
const SOURCE = 'pronk stepdown';

const FLAG_NAMES: StepToleranceOptionNames = {
  after: '--after',
  resolution_m: '--resolution',
  grid_m: '--grid',
  settle_strides: '--settle-strides',
  settle_band_m: '--settle-band',
};

export const stepdownCommand: Command = {
  name: 'stepdown',
  summary: 'largest single permanent drop and rise of the ground the policy survives, to 1 mm',
  usage: 'stepdown [FILE] [--after N] [--resolution M] [--grid M] [--settle-strides N] [--settle-band M] [--json]',
  details:
    "One permanent step of the ground, met at the first touchdown from the scenario's start apex, replaces the " +
    'scenario\'s terrain; the policy survives a step when it completes 1 + N strides. Step sizes are scanned on a coarse ' +
    'grid, then the gap between the last survivor and the first failure is bisected: the answer is the first failure ' +
    'boundary (survival need not be monotone in the step size).',
  arguments: [{ name: 'FILE', description: `scenario file (JSON); without it, the built-in demo (${DEMO_SOURCE})` }],
  options: {
    json: { type: 'boolean', description: 'print the result as JSON on stdout (and nothing else there)' },
    after: { type: 'string', valueName: 'N', description: `strides to survive after the one that meets the step, 1 to ${MAX_AFTER} (default ${DEFAULT_AFTER})` },
    resolution: { type: 'string', valueName: 'M', description: `resolution of the answer in metres (default ${DEFAULT_RESOLUTION_M})` },
    grid: { type: 'string', valueName: 'M', description: `spacing of the coarse scan in metres (default ${DEFAULT_GRID_M})` },
    'settle-strides': {
      type: 'string',
      valueName: 'N',
      description: `length of the long run that finds the new fixed point after the largest steps, 2 to ${MAX_SETTLE_STRIDES} (default ${DEFAULT_SETTLE_STRIDES})`,
    },
    'settle-band': { type: 'string', valueName: 'M', description: 'band about the new fixed point apex that counts as settled, m (default 0.001)' },
  },
  maxPositionals: 1,
  run: runStepdown,
};

async function runStepdown({ values, positionals }: ParsedCommandLine, io: CliIO): Promise<number> {
  const json = values.json === true;
  const after = parseIntegerOption(values.after, '--after', 1, MAX_AFTER, SOURCE);
  const positive = (v: number) => v > 0;
  const resolution = parseNumberOption(values.resolution, '--resolution', 'a step size > 0 (m)', SOURCE, positive);
  const grid = parseNumberOption(values.grid, '--grid', 'a spacing > 0 (m)', SOURCE, positive);
  const settleStrides = parseIntegerOption(values['settle-strides'], '--settle-strides', 2, MAX_SETTLE_STRIDES, SOURCE);
  const settleBand = parseNumberOption(values['settle-band'], '--settle-band', 'a band > 0 (m)', SOURCE, positive);
  const file = positionals[0];
  const scenario = await scenarioArgument(file, io, 'stepdown');
  const { stepTolerance } = await import('../core/analysis/stepdown.js');
  let result: StepToleranceResult;
  try {
    result = await stepTolerance(
      scenario,
      {
        ...(after === undefined ? {} : { after }),
        ...(resolution === undefined ? {} : { resolution_m: resolution }),
        ...(grid === undefined ? {} : { grid_m: grid }),
        ...(settleStrides === undefined ? {} : { settle_strides: settleStrides }),
        ...(settleBand === undefined ? {} : { settle_band_m: settleBand }),
      },
      FLAG_NAMES,
    );
  } catch (error) {
    if (error instanceof InputError) throw new InputError(error.issues, { source: SOURCE });
    throw error;
  }
  io.stdout.write(json ? jsonText('stepdown', result, modelHeader(scenario)) : renderStepTolerance(scenario, result));
  return 0;
}

// ---------------------------------------------------------------------------------------------
// The terminal view.

const TEXT_WIDTH = 96;
const mm = (m: number | null) => (m === null ? '-' : fixed(m * 1000, 1));

export function renderStepTolerance(scenario: Scenario, r: StepToleranceResult): string {
  const header = [
    scenario.name ?? 'Unnamed scenario',
    fields([
      ['policy', `${describeAngle(scenario.policy.angle)}; ${describeStiffness(scenario.policy.stiffness, scenario)}`],
      [
        'start',
        `apex ${plain(r.start.apex_height_m)} m at ${plain(r.start.forward_speed_m_per_s)} m/s, ` +
          `${mm(r.apex_clearance_m)} mm above the touchdown height (no higher step can be met)`,
      ],
      ['survival', `1 + ${count(r.strides_after, 'stride')} after one permanent step at the first touchdown (replaces the terrain)`],
      [
        'search',
        `every ${mm(r.grid_m)} mm` +
          (r.step_down.grid_m !== r.grid_m || r.step_up.grid_m !== r.grid_m
            ? ` (drops every ${mm(r.step_down.grid_m)} mm, rises every ${mm(r.step_up.grid_m)} mm: at most ${MAX_GRID_POINTS} sizes per direction)`
            : '') +
          `, then bisected to ${mm(r.resolution_m)} mm: the first failure boundary`,
      ],
    ]),
  ].join('\n');
  const columns: Column[] = [
    { title: 'step', unit: '', align: 'left' },
    { title: 'largest survived', unit: 'mm' },
    { title: 'first failure', unit: 'mm' },
    { title: 'how it fails there', unit: '', align: 'left' },
    { title: 'settles in', unit: 'strides' },
    { title: 'new apex', unit: 'm' },
    { title: 'above ground', unit: 'm' },
  ];
  const row = (name: string, d: StepDirectionResult) => {
    const fp = d.settle.new_fixed_point;
    return [
      name,
      mm(d.max_survived_m),
      d.first_failure_m === null ? `none to ${mm(d.search_limit_m)}` : mm(d.first_failure_m),
      d.failure_just_past ? `${d.failure_just_past.reason} at stride ${d.failure_just_past.failed_stride}` : '-',
      d.settle.strides_to_settle === null ? '-' : String(d.settle.strides_to_settle),
      fp ? fixed(fp.apex_height_m, 4) : '-',
      fp ? fixed(fp.apex_above_ground_m, 4) : '-',
    ];
  };
  const notes: string[] = [];
  if (!r.survives_flat) notes.push(`The policy does not survive 1 + ${r.strides_after} strides even without a step: both answers are 0.`);
  for (const [name, d] of [['drop', r.step_down], ['rise', r.step_up]] as const) {
    if (d.bounded_by === 'search_limit') notes.push(`Every ${name} up to the search limit (${d.search_limit_reason}, ${mm(d.search_limit_m)} mm) survived.`);
    if (d.survivors_past_first_failure_m.length) {
      notes.push(
        `Survival is not monotone: larger ${name}s survive again on the coarse grid (${d.survivors_past_first_failure_m.map((m) => `${mm(m)} mm`).join(', ')}).`,
      );
    }
    if (d.settle.new_fixed_point === null) {
      notes.push(
        `After the largest ${name} the gait does not settle within ${count(d.settle.strides, 'stride')} ` +
          `(${d.settle.strides_completed === d.settle.strides ? 'no fixed point reached' : `it fails at stride ${d.settle.strides_completed}`}).`,
      );
    }
  }
  notes.push(`Note: ${r.note}.`);
  return [
    header,
    '',
    table(columns, [row('drop', r.step_down), row('rise', r.step_up)], '  '),
    '',
    ...notes.map((n) => wrap(n, TEXT_WIDTH)),
    '',
    wrap(SAFETY_CAUTION, TEXT_WIDTH, 'Caution: ', '  '),
    '',
  ].join('\n');
}
