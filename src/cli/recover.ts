// `pronk recover FILE [--kick-left V] ... [--rollouts R --seed N] [--json]`: impulse recovery of a
// lateral leg-spring scenario's periodic gait, one kick or Monte Carlo over random kicks.

import { anyScenarioArgument } from './scenario-argument.js';
import { decimalDigits, decimalNumber } from '../core/decimal.js';
import { InputError, describeFound } from '../core/errors.js';
import { expectedDecimal } from './options.js';
import { LATERAL_HEADER, jsonText } from '../core/json-output.js';
import { SAFETY_CAUTION } from '../core/safety.js';
import type { KickSpec, RandomKickSpec, RecoverMonteCarloResult, RecoverTolerances, RecoveryResult } from '../core/analysis/recover.js';
import type { LateralScenario } from '../core/models/lateral.js';
import type { SlipRecoveryResult } from '../core/analysis/recover-slip.js';
import type { Scenario } from '../core/scenario.js';
import { count, fields, fixed, plain, table, wrap, type Column } from './format.js';
import type { CliIO, Command, ParsedCommandLine } from './command.js';
import { startProgress } from './progress.js';
import type { ShardSpec } from '../core/shard.js';
import { SHARD_OPTIONS, makePartial, outOption, shardOption, shardRange, writePartial, writeText } from './shard-output.js';
import { checkOutputs, outputRequest, type CheckedOutput } from './output-files.js';

const SOURCE = 'pronk recover';
const TEXT_WIDTH = 96;
const DEFAULT_KICK_STRIDE = 2;
const DEFAULT_KICK_AT = 0.25;
const DEFAULT_SEED = 1;
const MAX_ROLLOUTS = 1_000_000;

export const recoverCommand: Command = {
  name: 'recover',
  summary: 'impulse recovery of a gait: kick it at a chosen moment, strides and time to recover, heading lost, survival',
  usage:
    'recover FILE [--kick-left V] [--kick-forward V] [--kick-up V] [--kick-angle DEG] [--kick-rate DEG/S] [--kick-stride N] [--kick-at F | --kick-after S] ' +
    '[--strides-after N] [--speed-tol V] [--height-tol M] [--heading-rate-tol DEG/S] [--body-angle-tol DEG] [--rollouts R] [--seed N] [--shard I/N] [--out FILE] [--json]',
  details: [
    'Runs the periodic gait of a "lateral" scenario (the one at its start energy nearest its start, stable ones first),',
    'kicks it in stride N (a velocity change in the body frame, forward and to the left, a body-angle or an',
    'angular-velocity change) at a fraction F of the stride period or S seconds after the left touchdown, and reports',
    'the strides and time until the speed, the heading rate and the body angle to the velocity stay within their',
    'tolerances of the gait of the energy after the kick. A velocity kick changes the energy, which the model conserves:',
    'the original gait is then out of reach, and the output says so. The heading is neutral: the turn a kick leaves is',
    'permanent (the heading lost). With --rollouts, each kick size is drawn uniformly in [-V, V] and its moment',
    'uniformly over the stride, rollout i from stream i of --seed (common random numbers); survival and recovery come',
    'with Wilson 95 % intervals.',
    'A single-leg scenario (fixed attack angle, conservative leg): the kick lands in flight after apex N',
    '(--kick-forward, --kick-up; --kick-at a fraction of the time from the apex to touchdown, --kick-after',
    'seconds after the apex), on flat ground, and recovery is judged on the apex height (--height-tol) and speed.',
  ].join('\n'),
  arguments: [{ name: 'FILE', description: 'a scenario file: "model": "lateral", or a single-leg scenario' }],
  options: {
    json: { type: 'boolean', description: 'print the result as JSON on stdout (and nothing else there)' },
    'kick-left': { type: 'string', valueName: 'V', description: 'velocity change across the body axis, to the left, m/s (default 0)' },
    'kick-forward': { type: 'string', valueName: 'V', description: 'velocity change along the body axis (single leg: forward), m/s (default 0)' },
    'kick-up': { type: 'string', valueName: 'V', description: 'single leg: vertical velocity change in flight, m/s (default 0)' },
    'kick-angle': { type: 'string', valueName: 'DEG', description: 'body angle change, deg (default 0)' },
    'kick-rate': { type: 'string', valueName: 'DEG/S', description: 'angular velocity change, deg/s (default 0)' },
    'kick-stride': { type: 'string', valueName: 'N', description: `stride of the kick, from 0 (default ${DEFAULT_KICK_STRIDE})` },
    'kick-at': { type: 'string', valueName: 'F', description: `moment of the kick as a fraction of the stride period, 0 to < 1 (default ${DEFAULT_KICK_AT})` },
    'kick-after': { type: 'string', valueName: 'S', description: 'moment of the kick in seconds after the left touchdown (instead of --kick-at)' },
    'strides-after': { type: 'string', valueName: 'N', description: 'strides run after the kick (default 30)' },
    'speed-tol': { type: 'string', valueName: 'V', description: "speed tolerance, m/s (default 1 % of the gait's speed)" },
    'height-tol': { type: 'string', valueName: 'M', description: 'single leg: apex height tolerance, m (default 0.1 % of the leg length)' },
    'heading-rate-tol': { type: 'string', valueName: 'DEG/S', description: 'heading rate tolerance, deg/s (default 1)' },
    'body-angle-tol': { type: 'string', valueName: 'DEG', description: 'tolerance on the body angle to the velocity, deg (default 0.5)' },
    rollouts: { type: 'string', valueName: 'R', description: 'Monte Carlo: R random kicks, the kick values their largest sizes' },
    seed: { type: 'string', valueName: 'N', description: `Monte Carlo seed, an integer >= 0 (default ${DEFAULT_SEED})` },
    ...SHARD_OPTIONS,
  },
  maxPositionals: 1,
  run: runRecover,
};

function numberOption(value: string | boolean | undefined, flag: string, low: number, high: number, unit: string, source = SOURCE): number | undefined {
  if (value === undefined || typeof value === 'boolean') return undefined;
  const x = decimalNumber(value);
  if (!Number.isFinite(x) || x < low || x > high) {
    throw new InputError([{ path: flag, expected: expectedDecimal(`a number from ${low} to ${high} (${unit})`, value), found: describeFound(value) }], { source });
  }
  return x;
}

function integerOption(value: string | boolean | undefined, flag: string, low: number, high: number, source = SOURCE): number | undefined {
  if (value === undefined || typeof value === 'boolean') return undefined;
  const n = decimalDigits(value);
  if (!(n >= low && n <= high)) {
    throw new InputError([{ path: flag, expected: expectedDecimal(`an integer from ${low} to ${high}`, value, true), found: describeFound(value) }], { source });
  }
  return n;
}

/** The options of the lateral kicks, shared by `pronk robustness` on a lateral scenario (same names, bounds and defaults). */
export const LATERAL_KICK_OPTIONS = {
  'kick-left': { type: 'string', valueName: 'V', description: 'lateral scenario: largest velocity change across the body axis, m/s (default 0)' },
  'kick-forward': { type: 'string', valueName: 'V', description: 'lateral scenario: largest velocity change along the body axis, m/s (default 0)' },
  'kick-angle': { type: 'string', valueName: 'DEG', description: 'lateral scenario: largest body angle change, deg (default 0)' },
  'kick-rate': { type: 'string', valueName: 'DEG/S', description: 'lateral scenario: largest angular velocity change, deg/s (default 0)' },
  'kick-stride': { type: 'string', valueName: 'N', description: `lateral scenario: stride of the kick, from 0 (default ${DEFAULT_KICK_STRIDE})` },
} as const;

/**
 * The largest random kick sizes and the kick's stride from the command line, as `pronk recover
 * --rollouts` reads them (the same bounds and defaults); at least one size must be non-zero.
 */
export function parseRandomKicks(
  values: ParsedCommandLine['values'],
  source: string,
): { forward: number; left: number; angle: number; rate: number; stride: number } {
  const left = numberOption(values['kick-left'], '--kick-left', -1e3, 1e3, 'm/s', source);
  const forward = numberOption(values['kick-forward'], '--kick-forward', -1e3, 1e3, 'm/s', source);
  const angle = numberOption(values['kick-angle'], '--kick-angle', -180, 180, 'deg', source);
  const rate = numberOption(values['kick-rate'], '--kick-rate', -1e5, 1e5, 'deg/s', source);
  const stride = integerOption(values['kick-stride'], '--kick-stride', 0, 100_000, source) ?? DEFAULT_KICK_STRIDE;
  if (!left && !forward && !angle && !rate) {
    throw new InputError(
      [{ path: '--kick-left', expected: 'a kick: at least one of --kick-left, --kick-forward, --kick-angle, --kick-rate not 0', found: 'none' }],
      { source },
    );
  }
  return { forward: Math.abs(forward ?? 0), left: Math.abs(left ?? 0), angle: Math.abs(angle ?? 0), rate: Math.abs(rate ?? 0), stride };
}

async function runRecover({ values, positionals }: ParsedCommandLine, io: CliIO): Promise<number> {
  const json = values.json === true;
  const left = numberOption(values['kick-left'], '--kick-left', -1e3, 1e3, 'm/s');
  const forward = numberOption(values['kick-forward'], '--kick-forward', -1e3, 1e3, 'm/s');
  const up = numberOption(values['kick-up'], '--kick-up', -1e3, 1e3, 'm/s');
  const heightTol = numberOption(values['height-tol'], '--height-tol', 0, 1e4, 'm');
  const angle = numberOption(values['kick-angle'], '--kick-angle', -180, 180, 'deg');
  const rate = numberOption(values['kick-rate'], '--kick-rate', -1e5, 1e5, 'deg/s');
  // bounded so that one rollout's stride records stay far below the kernel's 4 GB memory
  const stride = integerOption(values['kick-stride'], '--kick-stride', 0, 100_000) ?? DEFAULT_KICK_STRIDE;
  const at = numberOption(values['kick-at'], '--kick-at', 0, 0.999999, 'fraction of the stride period');
  const after = numberOption(values['kick-after'], '--kick-after', 0, 1e6, 's');
  const stridesAfter = integerOption(values['strides-after'], '--strides-after', 3, 100_000);
  const speedTol = numberOption(values['speed-tol'], '--speed-tol', 0, 1e3, 'm/s');
  const rateTol = numberOption(values['heading-rate-tol'], '--heading-rate-tol', 0, 1e5, 'deg/s');
  const angleTol = numberOption(values['body-angle-tol'], '--body-angle-tol', 0, 180, 'deg');
  const rollouts = integerOption(values.rollouts, '--rollouts', 1, MAX_ROLLOUTS);
  const seed = integerOption(values.seed, '--seed', 0, Number.MAX_SAFE_INTEGER);
  if (at !== undefined && after !== undefined) {
    throw new InputError([{ path: '--kick-after', expected: 'either --kick-at or --kick-after, not both', found: 'both' }], { source: SOURCE });
  }
  if (rollouts === undefined && seed !== undefined) {
    throw new InputError([{ path: '--seed', expected: 'a seed only with --rollouts (Monte Carlo)', found: describeFound(values.seed) }], { source: SOURCE });
  }
  if (rollouts !== undefined && (at !== undefined || after !== undefined)) {
    throw new InputError(
      [{ path: '--rollouts', expected: 'no --kick-at or --kick-after with --rollouts (the moment of each kick is drawn over the stride)', found: 'a fixed moment' }],
      { source: SOURCE },
    );
  }
  if (!left && !forward && !angle && !rate && !up) {
    throw new InputError(
      [{ path: '--kick-left', expected: 'a kick: at least one of --kick-left, --kick-forward, --kick-up, --kick-angle, --kick-rate not 0', found: 'none' }],
      { source: SOURCE },
    );
  }
  if (positionals[0] === undefined) {
    throw new InputError([{ path: 'FILE', expected: 'a scenario file ("model": "lateral", or a single-leg scenario)', found: 'missing' }], { source: SOURCE });
  }
  const shard = withSource(() => shardOption(values));
  const out = withSource(() => outOption(values));
  if (shard && rollouts === undefined) {
    throw new InputError([{ path: '--shard', expected: 'a shard of a Monte Carlo run (with --rollouts)', found: describeFound(values.shard) }], { source: SOURCE });
  }
  const [outFile] = await checkOutputs([outputRequest('--out', out)], [{ path: positionals[0], what: 'the scenario' }], { source: SOURCE });
  const any = await anyScenarioArgument(positionals[0], io, 'recover');
  const refuse = (names: string[], kind: string, takes: string) => {
    const given = names.filter((n) => values[n] !== undefined);
    if (given.length) {
      throw new InputError(
        [{ path: `--${given[0]}`, expected: `no such option for a ${kind} scenario (it takes ${takes})`, found: describeFound(values[given[0]]) }],
        { source: SOURCE },
      );
    }
  };
  if (any.kind !== 'lateral') {
    refuse(['kick-left', 'kick-angle', 'kick-rate', 'heading-rate-tol', 'body-angle-tol', 'rollouts', 'seed', 'shard'], 'single-leg', '--kick-forward, --kick-up, --kick-stride, --kick-at or --kick-after, --strides-after, --speed-tol, --height-tol');
    const { loadEngine } = await import('../core/engine.js');
    const { recoverSlipOnce } = await import('../core/analysis/recover-slip.js');
    const engine = await loadEngine();
    let r: SlipRecoveryResult;
    try {
      r = await recoverSlipOnce(
        engine,
        any.scenario,
        { stride, ...(after === undefined ? { fraction: at ?? DEFAULT_KICK_AT } : { seconds: after }), forward_m_per_s: forward ?? 0, up_m_per_s: up ?? 0 },
        {
          stridesAfter,
          tolerances: { ...(heightTol === undefined ? {} : { height_m: heightTol }), ...(speedTol === undefined ? {} : { speed_m_per_s: speedTol }) },
        },
      );
    } catch (error) {
      throw error instanceof InputError && error.source === undefined ? new InputError(error.issues, { source: positionals[0] }) : error;
    }
    await writeText(io, outFile, json ? jsonText('recover', { scenario: any.scenario, ...r, caution: SAFETY_CAUTION }) : renderSlipRecovery(any.scenario, r), 'recover');
    return 0;
  }
  refuse(['kick-up', 'height-tol'], 'lateral', 'the lateral kicks and tolerances');
  const s = any.scenario;
  const tolerances: Partial<RecoverTolerances> = {
    ...(speedTol === undefined ? {} : { speed_m_per_s: speedTol }),
    ...(rateTol === undefined ? {} : { heading_rate_deg_per_s: rateTol }),
    ...(angleTol === undefined ? {} : { body_angle_deg: angleTol }),
  };
  const { loadEngine } = await import('../core/engine.js');
  const recover = await import('../core/analysis/recover.js');
  const engine = await loadEngine();
  if (rollouts === undefined) {
    const spec: KickSpec = {
      stride,
      ...(after === undefined ? { fraction: at ?? DEFAULT_KICK_AT } : { seconds: after }),
      forward_m_per_s: forward ?? 0,
      left_m_per_s: left ?? 0,
      angle_deg: angle ?? 0,
      rate_deg_per_s: rate ?? 0,
    };
    const r = recover.recoverOnce(engine, s, spec, { stridesAfter, tolerances });
    await writeText(io, outFile, json ? jsonText('recover', { scenario: s, ...r, caution: SAFETY_CAUTION }, LATERAL_HEADER) : renderRecovery(s, r), 'recover');
    return 0;
  }
  const spec: RandomKickSpec = {
    stride,
    max_forward_m_per_s: Math.abs(forward ?? 0),
    max_left_m_per_s: Math.abs(left ?? 0),
    max_angle_deg: Math.abs(angle ?? 0),
    max_rate_deg_per_s: Math.abs(rate ?? 0),
    seed: seed ?? DEFAULT_SEED,
    rollouts,
  };
  return runLateralMonteCarlo(io, { command: 'recover', scenario: s, kicks: spec, stridesAfter, tolerances, shard, outFile, json });
}

/**
 * The Monte Carlo over random kicks of a lateral scenario, run and printed: `pronk recover
 * --rollouts` and `pronk robustness` on a lateral scenario (the same rows, finisher and views; only
 * the JSON header's format and the partial result's command differ).
 */
export async function runLateralMonteCarlo(
  io: CliIO,
  a: {
    command: 'recover' | 'robustness';
    scenario: LateralScenario;
    kicks: RandomKickSpec;
    stridesAfter: number | undefined;
    tolerances: Partial<RecoverTolerances>;
    shard: ShardSpec | undefined;
    outFile: CheckedOutput | undefined;
    json: boolean;
  },
): Promise<number> {
  const { scenario: s, kicks: spec, shard, outFile, tolerances } = a;
  const { loadEngine } = await import('../core/engine.js');
  const recover = await import('../core/analysis/recover.js');
  const engine = await loadEngine();
  const rollouts = spec.rollouts;
  const run = { kicks: spec, strides_after: a.stridesAfter ?? recover.DEFAULT_STRIDES_AFTER, tolerances };
  const range = shard ? withSource(() => shardRange(rollouts, shard), `pronk ${a.command}`) : { start: 0, end: rollouts };
  const progress = startProgress(io, a.command, { unit: 'rollouts' });
  let rows: ReturnType<typeof recover.recoverRows>;
  try {
    progress.phase('kicks', range.end - range.start);
    rows = recover.recoverRows(engine, s, spec, range, { stridesAfter: run.strides_after, tolerances }, (d) => progress.update(d, range.end - range.start));
  } finally {
    progress.done();
  }
  if (shard) {
    const partial = await makePartial({ command: a.command, scenario: s, options: run as unknown as Record<string, unknown>, spec: shard, range, total: rollouts, rows });
    await writePartial(io, outFile, partial);
    return 0;
  }
  const r = await recover.finishRecoverRun(s, run, rows);
  await writeText(io, outFile, a.json ? recoverMonteCarloJson(r, a.command) : renderMonteCarlo(s, r), a.command);
  return 0;
}

/** The --json text of a Monte Carlo recovery (also what `pronk merge --json` prints). */
export function recoverMonteCarloJson(r: RecoverMonteCarloResult, command: 'recover' | 'robustness' = 'recover'): string {
  return jsonText(command, { ...r, caution: SAFETY_CAUTION }, LATERAL_HEADER);
}

function withSource<T>(f: () => T, source = SOURCE): T {
  try {
    return f();
  } catch (error) {
    if (error instanceof InputError && error.source === undefined) throw new InputError(error.issues, { source });
    throw error;
  }
}

function describeKick(k: { forward_m_per_s: number; left_m_per_s: number; angle_deg: number; rate_deg_per_s: number }): string {
  const parts: string[] = [];
  if (k.left_m_per_s) parts.push(`${plain(k.left_m_per_s)} m/s to the left`);
  if (k.forward_m_per_s) parts.push(`${plain(k.forward_m_per_s)} m/s forward`);
  if (k.angle_deg) parts.push(`body angle ${plain(k.angle_deg)} deg`);
  if (k.rate_deg_per_s) parts.push(`angular velocity ${plain(k.rate_deg_per_s)} deg/s`);
  return parts.join(', ');
}

function gaitLine(g: RecoveryResult['gait']): string {
  return (
    `${plain(g.speed_m_per_s)} m/s, heading ${plain(g.heading_to_body_deg)} deg to the body axis, ${plain(g.angular_velocity_deg_per_s)} deg/s at the left touchdown; ` +
    `stride ${fixed(g.stride_time_s * 1000, 2)} ms; ${g.stability} (reduced eigenvalue moduli ${g.reduced_eigenvalue_moduli.map((m) => fixed(m, 4)).join(', ')})`
  );
}

export function renderRecovery(s: LateralScenario, r: RecoveryResult): string {
  const o = r.outcome;
  const columns: Column[] = [
    { title: 'stride', unit: '', align: 'left' },
    { title: 'time', unit: 's' },
    { title: 'speed', unit: 'm/s' },
    { title: 'heading', unit: 'to body deg' },
    { title: 'ang. vel.', unit: 'deg/s' },
    { title: 'heading', unit: 'deg' },
    { title: 'heading rate', unit: 'deg/s' },
    { title: 'within', unit: 'tolerance', align: 'left' },
  ];
  const rows = r.per_stride.map((p) => [
    String(p.stride) + (p.stride === r.kick.stride ? ' kick' : ''),
    fixed(p.time_s, 4),
    fixed(p.speed_m_per_s, 5),
    fixed(p.heading_to_body_deg, 3),
    fixed(p.angular_velocity_deg_per_s, 2),
    fixed(p.heading_deg, 3),
    p.heading_rate_deg_per_s === null ? '-' : fixed(p.heading_rate_deg_per_s, 3),
    p.within_tolerance === null ? '' : p.within_tolerance ? 'yes' : 'no',
  ]);
  const verdict = !o.survived
    ? `Did not survive: ${o.reason ?? o.status} in stride ${o.strides_completed}.`
    : o.recovered
      ? `Recovered in ${count(o.strides_to_recover ?? 0, 'stride')} (${fixed(o.time_to_recover_s, 4)} s after the kick) to the gait of the ${o.original_gait_reachable ? 'original' : 'new'} energy; heading lost ${fixed(o.heading_lost_deg, 3)} deg (permanent).`
      : 'Survived, but did not recover within the tolerances in the strides run.';
  return [
    s.name ?? 'Unnamed scenario',
    fields([
      ['gait', gaitLine(r.gait)],
      ['kick', `${describeKick(r.kick)} in stride ${r.kick.stride}, ${fixed(r.kick.time_s * 1000, 2)} ms after its left touchdown`],
      [
        'tolerances',
        `speed ${plain(r.tolerances.speed_m_per_s)} m/s, heading rate ${plain(r.tolerances.heading_rate_deg_per_s)} deg/s, body angle to the velocity ${plain(r.tolerances.body_angle_deg)} deg`,
      ],
      [
        'energy',
        `${plain(o.energy_before_J)} J before, ${o.energy_after_J === null ? '-' : plain(o.energy_after_J)} J after` +
          (o.target_gait ? `; the gait at that energy: ${plain(o.target_gait.speed_m_per_s)} m/s, ${plain(o.target_gait.heading_to_body_deg)} deg to the body axis` : ''),
      ],
    ]),
    '',
    table(columns, rows),
    '',
    wrap(verdict, TEXT_WIDTH),
    ...r.notes.map((n) => wrap(n, TEXT_WIDTH)),
    '',
    wrap(`Caution: ${SAFETY_CAUTION}`, TEXT_WIDTH),
    '',
  ].join('\n');
}

export function renderMonteCarlo(s: LateralScenario, r: RecoverMonteCarloResult): string {
  const pct = (x: number) => `${fixed(100 * x, 1)} %`;
  const q = (x: { median: number | null; p90: number | null; max: number | null }, d: number) =>
    `median ${fixed(x.median, d)}, 90th percentile ${fixed(x.p90, d)}, largest ${fixed(x.max, d)}`;
  const failures = Object.entries(r.failures);
  return [
    s.name ?? 'Unnamed scenario',
    fields([
      ['gait', gaitLine(r.gait)],
      [
        'kicks',
        `${r.rollouts} in stride ${r.kicks.stride}, at a uniform moment of the stride, each size uniform in ±(${describeKick({
          forward_m_per_s: r.kicks.max_forward_m_per_s,
          left_m_per_s: r.kicks.max_left_m_per_s,
          angle_deg: r.kicks.max_angle_deg,
          rate_deg_per_s: r.kicks.max_rate_deg_per_s,
        })}); seed ${r.kicks.seed}`,
      ],
      ['survived', `${r.survived} of ${r.rollouts}: ${pct(r.survival)} (95 % interval ${pct(r.survival_interval_95[0])} to ${pct(r.survival_interval_95[1])})`],
      ['recovered', `${r.recovered} of ${r.rollouts}: ${pct(r.recovery)} (95 % interval ${pct(r.recovery_interval_95[0])} to ${pct(r.recovery_interval_95[1])})`],
      ['strides to recover', q(r.strides_to_recover, 0)],
      ['time to recover', `${q(r.time_to_recover_s, 4)} s`],
      [
        'heading lost',
        `|turn| median ${fixed(r.heading_lost_deg.median_abs, 3)}, 90th percentile ${fixed(r.heading_lost_deg.p90_abs, 3)}, largest ${fixed(r.heading_lost_deg.max_abs, 3)} deg (permanent)`,
      ],
      ['failures', failures.length ? failures.map(([k, v]) => `${k} ${v}`).join(', ') : 'none'],
    ]),
    '',
    ...r.notes.map((n) => wrap(n, TEXT_WIDTH)),
    '',
    wrap(`Caution: ${SAFETY_CAUTION}`, TEXT_WIDTH),
    '',
  ].join('\n');
}

export function renderSlipRecovery(s: Scenario, r: SlipRecoveryResult): string {
  const o = r.outcome;
  const columns: Column[] = [
    { title: 'apex', unit: '', align: 'left' },
    { title: 'from kick', unit: 's' },
    { title: 'height', unit: 'm' },
    { title: 'speed', unit: 'm/s' },
    { title: 'within', unit: 'tolerance', align: 'left' },
  ];
  const rows = r.per_apex.map((p) => [
    String(p.apex) + (p.apex === r.kick.stride ? ' kick' : ''),
    fixed(p.time_from_kick_s, 4),
    fixed(p.apex_height_m, 5),
    fixed(p.forward_speed_m_per_s, 5),
    p.within_tolerance === null ? '' : p.within_tolerance ? 'yes' : 'no',
  ]);
  const verdict = !o.survived
    ? `Did not survive: ${o.reason ?? o.status}.`
    : o.recovered
      ? `Recovered in ${count(o.strides_to_recover ?? 0, 'stride')} (${fixed(o.time_to_recover_s, 4)} s after the kick) to the gait of the ${o.original_gait_reachable ? 'original' : 'new'} energy.`
      : 'Survived, but the apexes did not settle within the tolerances in the strides run.';
  const kick: string[] = [];
  if (r.kick.forward_m_per_s) kick.push(`${plain(r.kick.forward_m_per_s)} m/s forward`);
  if (r.kick.up_m_per_s) kick.push(`${plain(r.kick.up_m_per_s)} m/s up`);
  return [
    s.name ?? 'Unnamed scenario',
    fields([
      [
        'gait',
        `apex ${plain(r.gait.apex_height_m)} m at ${plain(r.gait.forward_speed_m_per_s)} m/s (slope ${fixed(r.gait.slope, 4)}), stride ${fixed(r.gait.stride_time_s * 1000, 2)} ms, flat ground`,
      ],
      ['kick', `${kick.join(', ')} in flight ${fixed(r.kick.time_s * 1000, 2)} ms after apex ${r.kick.stride}`],
      ['tolerances', `apex height ${plain(r.tolerances.height_m)} m, speed ${plain(r.tolerances.speed_m_per_s)} m/s`],
      [
        'energy',
        `${plain(o.energy_before_J)} J before, ${plain(o.energy_after_J)} J after` +
          (o.target_gait ? `; the gait at that energy: apex ${plain(o.target_gait.apex_height_m)} m at ${plain(o.target_gait.forward_speed_m_per_s)} m/s` : ''),
      ],
    ]),
    '',
    table(columns, rows),
    '',
    wrap(verdict, TEXT_WIDTH),
    ...r.notes.map((n) => wrap(n, TEXT_WIDTH)),
    '',
    wrap(`Caution: ${SAFETY_CAUTION}`, TEXT_WIDTH),
    '',
  ].join('\n');
}
