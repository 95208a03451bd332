// The lateral leg-spring model in `pronk simulate` and `pronk map`: what they print for a
// "model": "lateral" scenario (the single-leg views are in simulate.ts and map.ts).

import { SAFETY_CAUTION } from '../core/safety.js';
import { LATERAL_HEADER, jsonText, jsonTextChunks } from '../core/json-output.js';
import { writeChunks } from './stream-output.js';
import { STATUS_NAMES, STATUS_TEXT } from '../core/model.js';
import * as L from '../../assembly/layout.js';
import type { LateralScanCell, LateralScanResult } from '../core/analysis/lateral-scan.js';
import type { ScanOptions } from '../core/analysis/scan.js';
import type { ShardSpec } from '../core/shard.js';
import { writePlotFile, type CheckedOutput } from './output-files.js';
import { makePartial, shardRange, writePartial, writeText } from './shard-output.js';
import type { LateralBasinOptions, LateralBasinResult } from '../core/analysis/lateral-basin.js';
import { InputError } from '../core/errors.js';
import type { LateralEigen, LateralFixedPoint, LateralMapResult, LateralSimulation } from '../core/analysis/lateral.js';
import { type LateralScenario, sectionEnergy, lateralStart } from '../core/models/lateral.js';
import { count, fields, fixed, plain, table, wrap, type Column } from './format.js';
import type { CliIO } from './command.js';

const TEXT_WIDTH = 96;

export function describeLateralBody(s: LateralScenario): string {
  const b = s.body;
  return (
    `${plain(b.mass_kg)} kg, I ${plain(b.moment_of_inertia_kg_m2)} kg m^2, leg ${plain(b.leg_length_m)} m at ` +
    `${plain(b.leg_stiffness_N_per_m)} N/m, attachment ${b.attachment_offset_m === 0 ? 'at the centre of mass' : `${plain(Math.abs(b.attachment_offset_m))} m ${b.attachment_offset_m > 0 ? 'ahead of' : 'behind'} the centre of mass`}` +
    (b.attachment_rate_m_per_s !== 0 ? ` moving ${plain(b.attachment_rate_m_per_s)} m/s in stance` : '')
  );
}

function header(s: LateralScenario, extra: [string, string][] = []): string {
  const start = lateralStart(s);
  return [
    s.name ?? 'Unnamed scenario',
    fields([
      ['model', 'lateral leg-spring (horizontal plane, left and right legs alternating, no flight)'],
      ['body', describeLateralBody(s)],
      ['policy', `touchdown at ${plain(s.policy.angle.angle_to_body_deg)} deg to the body axis; constant stiffness`],
      [
        'start',
        `left touchdown at ${plain(s.start.speed_m_per_s)} m/s, heading ${plain(s.start.heading_to_body_deg)} deg to the body axis, ` +
          `${plain(s.start.angular_velocity_deg_per_s)} deg/s; energy ${plain(sectionEnergy(s, start))} J`,
      ],
      ...extra,
    ]),
  ].join('\n');
}

const STRIDE_COLUMNS: Column[] = [
  { title: 'stride', unit: '', align: 'left' },
  { title: 'time', unit: 's' },
  { title: 'speed', unit: 'm/s' },
  { title: 'heading', unit: 'to body deg' },
  { title: 'ang. vel.', unit: 'deg/s' },
  { title: 'heading', unit: 'deg' },
  { title: 'body', unit: 'deg' },
  { title: 'stride', unit: 'ms' },
  { title: 'peak force', unit: 'N' },
  { title: 'compression', unit: '% leg' },
];

export function lateralSimulationJson(s: LateralScenario, r: LateralSimulation): object {
  return {
    scenario: s,
    status: STATUS_NAMES[r.status] ?? `status_${r.status}`,
    reason: r.status === L.STATUS_OK ? null : (STATUS_TEXT[r.status] ?? null),
    strides_completed: r.strides_completed,
    strides: r.rows.map((row) => ({ ...row, status: STATUS_NAMES[row.status] ?? `status_${row.status}` })),
    final: {
      time_s: r.final.time_s,
      x_m: r.final.x_m,
      y_m: r.final.y_m,
      body_angle_deg: (r.final.theta * 180) / Math.PI,
      speed_m_per_s: r.final.speed,
      heading_to_body_deg: (r.final.delta * 180) / Math.PI,
      angular_velocity_deg_per_s: (r.final.omega * 180) / Math.PI,
      heading_deg: (r.final.heading * 180) / Math.PI,
    },
    ...(r.samples
      ? {
          trajectory_truncated: r.truncated === true,
          trajectory: r.samples.map((p) => ({
            time_s: p.t,
            x_m: p.x,
            y_m: p.y,
            body_angle_deg: (p.theta * 180) / Math.PI,
            vx_m_per_s: p.vx,
            vy_m_per_s: p.vy,
            angular_velocity_deg_per_s: (p.omega * 180) / Math.PI,
            foot_x_m: p.footX,
            foot_y_m: p.footY,
            leg_force_N: p.force,
            leg: p.side > 0 ? 'left' : 'right',
            stride: p.stride,
          })),
        }
      : {}),
    caution: SAFETY_CAUTION,
  };
}

export function renderLateralSimulation(s: LateralScenario, r: LateralSimulation, requested: number): string {
  // past 60 strides, the first 40 and the last 10 (--json lists every stride)
  const shown = r.rows.length > 60 ? [...r.rows.slice(0, 40), null, ...r.rows.slice(-10)] : r.rows;
  const rows = shown.map((row) => row === null ? `... ${r.rows.length - 50} strides left out (--json lists every one) ...` : [
    String(row.stride),
    fixed(row.time_s, 4),
    fixed(row.speed_m_per_s, 4),
    fixed(row.heading_to_body_deg, 3),
    fixed(row.angular_velocity_deg_per_s, 2),
    fixed(row.heading_deg, 3),
    fixed(row.body_angle_deg, 3),
    fixed(row.stride_time_s * 1000, 2),
    fixed(row.peak_leg_force_N, 4),
    fixed((100 * row.max_compression_m) / s.body.leg_length_m, 1),
  ]);
  const deg = 180 / Math.PI;
  const outcome =
    r.status === L.STATUS_OK
      ? `Outcome: all ${count(requested, 'stride')} completed; at the last left touchdown ${fixed(r.final.speed, 4)} m/s, heading ${fixed(r.final.heading * deg, 3)} deg (${fixed(r.final.delta * deg, 3)} deg to the body axis), ${fixed(r.final.omega * deg, 2)} deg/s.`
      : `Outcome: failed in stride ${r.strides_completed} after ${count(r.strides_completed, 'completed stride')}: ${STATUS_TEXT[r.status] ?? `status ${r.status}`}.`;
  return [
    header(s, [['strides', `${count(requested, 'stride')} requested (a stride: a left and a right stance)`]]),
    '',
    'Each row: the state at a left touchdown and the stride that follows it.',
    table(STRIDE_COLUMNS, rows),
    '',
    wrap(outcome, TEXT_WIDTH),
    '',
    wrap(`Caution: ${SAFETY_CAUTION}`, TEXT_WIDTH),
    '',
  ].join('\n');
}

export async function runLateralSimulate(
  s: LateralScenario,
  io: CliIO,
  options: { json: boolean; strides?: number; traceInterval?: number },
): Promise<number> {
  const { loadEngine } = await import('../core/engine.js');
  const { simulateLateral } = await import('../core/analysis/lateral.js');
  const engine = await loadEngine();
  const n = options.strides ?? s.strides;
  const r = simulateLateral(engine, s, { strides: n, ...(options.json && options.traceInterval ? { dt: options.traceInterval } : {}) });
  // in pieces: the documented 1 000 000 strides make more JSON than one string holds
  if (options.json) await writeChunks(io.stdout, jsonTextChunks('simulate', lateralSimulationJson(s, r), LATERAL_HEADER));
  else io.stdout.write(renderLateralSimulation(s, r, n));
  return 0;
}

// ---------------------------------------------------------------------------------------------
// map

function showEigen(z: LateralEigen): string {
  if (Math.abs(z.im) < 5e-7) return fixed(z.re, 6);
  return `${fixed(z.re, 6)}${z.im < 0 ? '-' : '+'}${fixed(Math.abs(z.im), 6)}i`;
}

export interface LateralMapOutput extends LateralMapResult {
  minimum_speed_m_per_s: number | null;
  notes: string[];
}

export function lateralMapJson(s: LateralScenario, r: LateralMapOutput): object {
  const fp = (f: LateralFixedPoint) => f;
  return { scenario: s, ...r, fixed_points: r.fixed_points.map(fp), caution: SAFETY_CAUTION };
}

export function renderLateralMap(s: LateralScenario, r: LateralMapOutput): string {
  const columns: Column[] = [
    { title: 'gait', unit: '', align: 'left' },
    { title: 'speed', unit: 'm/s' },
    { title: 'heading', unit: 'to body deg' },
    { title: 'ang. vel.', unit: 'deg/s' },
    { title: 'stride', unit: 'ms' },
    { title: 'peak force', unit: 'N' },
    { title: 'reduced eigenvalues', unit: r.energy_conserved ? '(heading to body, ang. vel.)' : '(speed, heading to body, ang. vel.)', align: 'left' },
    { title: 'stability', unit: '', align: 'left' },
  ];
  const rows = r.fixed_points.map((f, i) => [
    String(i + 1),
    fixed(f.speed_m_per_s, 4),
    fixed(f.heading_to_body_deg, 4),
    fixed(f.angular_velocity_deg_per_s, 3),
    fixed(f.stride_time_s * 1000, 2),
    fixed(f.peak_leg_force_N, 4),
    f.reduced_eigenvalues.map(showEigen).join(', '),
    f.stability,
  ]);
  const full = r.fixed_points.map(
    (f, i) =>
      `  gait ${i + 1}: full stride map ${f.eigenvalues.map(showEigen).join(', ')}; distance of the two nearest 1: ` +
      `${f.unit_eigenvalue_errors.map((e) => e.toExponential(1)).join(', ')}; residual over a stride ${f.stride_residual.toExponential(1)}`,
  );
  const lines = [
    header(s, [
      ...((r.energy_conserved
        ? [
            ['energy', `${plain(r.energy_J)} J (speed ${plain(r.speed_m_per_s)} m/s without rotation)`],
            [
              'minimum',
              r.minimum_speed_m_per_s === null
                ? 'no periodic gait found at this speed, at ten times it, or below'
                : `no periodic gait below ${plain(r.minimum_speed_m_per_s)} m/s (the lowest speed with one, by bisection to 1e-4)`,
            ],
          ]
        : [['energy', 'not conserved (a moving attachment point): every gait at any speed, searched from the start speed']]) as [string, string][]),
    ]),
    '',
    r.fixed_points.length === 0
      ? `No periodic gait${r.energy_conserved ? ' at this energy' : ''}.`
      : `Periodic gaits${r.energy_conserved ? ' at this energy' : ''} (left touchdown state; ${count(r.fixed_points.length, 'fixed point')}):`,
    ...(r.fixed_points.length ? [table(columns, rows), '', 'Eigenvalues of the full stride map (speed, heading to body, angular velocity, heading):', ...full] : []),
    '',
    ...r.notes.map((n) => wrap(n, TEXT_WIDTH)),
    '',
    wrap(`Caution: ${SAFETY_CAUTION}`, TEXT_WIDTH),
    '',
  ];
  return lines.join('\n');
}

export const LATERAL_MAP_NOTES = [
  'The full stride map has the eigenvalue 1 twice by symmetry: energy is conserved (with a fixed attachment point) and the dynamics do not depend on the absolute heading. The reduced map acts on the heading to the body axis and the angular velocity at fixed energy; a gait is stable when both of its eigenvalues lie inside the unit circle, neutral when the largest is 1.',
  'The search finds the symmetric gaits (the right stance mirrors the left) from a grid of starts by Newton\'s method on the half-stride map.',
];

const MOVING_NOTE =
  'The attachment point moves in stance (body.attachment_rate_m_per_s), doing work on the body: the energy is not conserved, so the periodic gaits are isolated (each with its own speed, found with it) and the full stride map has the eigenvalue 1 once, for the heading. The reduced map acts on the speed, the heading to the body axis and the angular velocity.';

export async function runLateralMap(s: LateralScenario, io: CliIO, options: { json: boolean }): Promise<number> {
  const { loadEngine } = await import('../core/engine.js');
  const { lateralFixedPoints, minimumGaitSpeed } = await import('../core/analysis/lateral.js');
  const engine = await loadEngine();
  const r = lateralFixedPoints(engine, s);
  // below the scenario's speed when it has a gait, else from ten times it (at most 1000 m/s); with a
  // moving attachment point the gaits are isolated (no family over speed)
  const minimum = r.energy_conserved
    ? minimumGaitSpeed(engine, s, r.fixed_points.length ? r.speed_m_per_s : Math.min(1e3, 10 * r.speed_m_per_s))
    : undefined;
  const notes = r.energy_conserved ? LATERAL_MAP_NOTES : [MOVING_NOTE, LATERAL_MAP_NOTES[1]];
  const out: LateralMapOutput = { ...r, minimum_speed_m_per_s: minimum ?? null, notes };
  if (options.json) io.stdout.write(jsonText('map', lateralMapJson(s, out), LATERAL_HEADER));
  else io.stdout.write(renderLateralMap(s, out));
  return 0;
}

// ---------------------------------------------------------------------------------------------
// basin

const BASIN_SYMBOL: Record<string, string> = { converged: '#', wandering: '~', fell: '.', no_speed: ' ' };

export function renderLateralBasin(s: LateralScenario, r: LateralBasinResult): string {
  const h = r.headings_deg;
  const w = r.rates_deg_per_s;
  const rows: string[] = [];
  if (w.length <= 120 && h.length <= 200) {
    rows.push(`  heading to body error (deg) down, angular velocity error ${plain(w[0])} to ${plain(w[w.length - 1])} deg/s across`);
    for (let i = h.length - 1; i >= 0; i--) {
      const line = r.cells.slice(i * w.length, (i + 1) * w.length).map((c) => BASIN_SYMBOL[c.outcome]).join('');
      rows.push(`  ${fixed(h[i], 2).padStart(8)}  ${line}`);
    }
    rows.push("  # converged (back on the gait)  ~ wandering  . fell  (blank: the rotation alone exceeds the gait's energy)");
  } else rows.push('  (the grid is too large to draw; --json lists every cell)');
  const turns = r.cells.filter((c) => c.outcome === 'converged' && c.turn_deg !== null).map((c) => Math.abs(c.turn_deg as number));
  return [
    header(s, [
      [
        'gait',
        `${plain(r.gait.speed_m_per_s)} m/s, ${plain(r.gait.heading_to_body_deg)} deg to the body axis, ${plain(r.gait.angular_velocity_deg_per_s)} deg/s (${r.gait.stability}); energy ${plain(r.gait.energy_J)} J`,
      ],
      [
        'grid',
        `heading errors ${plain(h[0])} to ${plain(h[h.length - 1])} deg (${h.length}) x angular velocity errors ${plain(w[0])} to ${plain(w[w.length - 1])} deg/s (${w.length}), at the gait's energy`,
      ],
      ['criterion', `${count(r.strides, 'stride')} per cell; converged within ${plain(r.tolerance)} deg and deg/s of the gait`],
    ]),
    '',
    ...rows,
    '',
    wrap(
      `Attracted: ${r.counts.converged} of ${r.cells.length} cells (${fixed(100 * r.attracted_fraction, 1)} %); wandering ${r.counts.wandering}, fell ${r.counts.fell}` +
        (r.counts.no_speed ? `, no speed at this energy ${r.counts.no_speed}` : '') +
        '.' +
        (turns.length ? ` The converged cells keep a permanent turn (the heading is neutral): up to ${fixed(Math.max(...turns), 2)} deg.` : ''),
      TEXT_WIDTH,
    ),
    '',
  ].join('\n');
}

export async function runLateralBasin(
  s: LateralScenario,
  io: CliIO,
  options: { json: boolean; shard?: ShardSpec; outFile?: CheckedOutput; plotFile?: CheckedOutput } & LateralBasinOptions,
): Promise<number> {
  const { loadEngine } = await import('../core/engine.js');
  const core = await import('../core/analysis/lateral-basin.js');
  const engine = await loadEngine();
  const { json, shard, outFile, plotFile, ...rest } = options;
  const source = (error: unknown) => (error instanceof InputError ? new InputError(error.issues, { source: 'pronk basin' }) : error);
  try {
    const run = core.lateralBasinRun(engine, s, rest);
    const total = core.lateralBasinCellCount(run);
    const range = shard ? shardRange(total, shard) : { start: 0, end: total };
    const rows = core.lateralBasinRows(engine, s, run, range);
    if (shard) {
      const partial = await makePartial({ command: 'basin', scenario: s, options: run as unknown as Record<string, unknown>, spec: shard, range, total, rows });
      await writePartial(io, outFile, partial);
      return 0;
    }
    const r = core.finishLateralBasin(engine, s, run, rows);
    await writeText(io, outFile, json ? lateralBasinJson(s, r) : renderLateralBasin(s, r), 'basin');
    if (plotFile !== undefined) await writePlotFile(io, 'basin', plotFile, r);
    return 0;
  } catch (error) {
    throw source(error);
  }
}

/** The --json text of a lateral basin (also what `pronk merge --json` prints). */
export function lateralBasinJson(s: LateralScenario, r: LateralBasinResult): string {
  return jsonText('basin', { scenario: s, ...r, caution: SAFETY_CAUTION }, LATERAL_HEADER);
}

/** The --json text of a lateral scan (also what `pronk merge --json` prints). */
export function lateralScanJson(s: LateralScenario, r: LateralScanResult): string {
  return jsonText('scan', { scenario: s, ...r, caution: SAFETY_CAUTION }, LATERAL_HEADER);
}

// ---------------------------------------------------------------------------------------------
// scan

const SCAN_SYMBOL: Record<string, string> = { stable: '#', neutral: '=', unstable: 'o', none: '.' };

export function renderLateralScan(s: LateralScenario, r: LateralScanResult): string {
  const nx = r.x.values.length;
  const ny = r.y.values.length;
  const rows: string[] = [];
  if (nx <= 120 && ny <= 200) {
    rows.push(`  ${r.y.path} down, ${r.x.path} across (${plain(r.x.values[0])} to ${plain(r.x.values[nx - 1])})`);
    for (let iy = ny - 1; iy >= 0; iy--) {
      rows.push(`  ${plain(r.y.values[iy]).padStart(10)}  ${r.cells.slice(iy * nx, (iy + 1) * nx).map((c) => SCAN_SYMBOL[c.class]).join('')}`);
    }
    rows.push('  # a stable gait  = neutral  o only unstable gaits  . no periodic gait');
  } else rows.push('  (the grid is too large to draw; --json lists every cell)');
  return [
    header(s, [
      ['x', `${r.x.path}: ${nx} values from ${plain(r.x.values[0])} to ${plain(r.x.values[nx - 1])}`],
      ['y', `${r.y.path}: ${ny} values from ${plain(r.y.values[0])} to ${plain(r.y.values[ny - 1])}`],
      ['cells', `each at its own start energy: stable ${r.counts.stable}, neutral ${r.counts.neutral}, unstable ${r.counts.unstable}, none ${r.counts.none}`],
    ]),
    '',
    ...rows,
    '',
  ].join('\n');
}

export async function runLateralScan(
  s: LateralScenario,
  io: CliIO,
  options: { json: boolean; options: ScanOptions; shard?: ShardSpec; outFile?: CheckedOutput; plotFile?: CheckedOutput },
): Promise<number> {
  const { loadEngine } = await import('../core/engine.js');
  const core = await import('../core/analysis/lateral-scan.js');
  const { startProgress } = await import('./progress.js');
  const engine = await loadEngine();
  const { x, y } = options.options;
  const total = x.n * y.n;
  const range = options.shard ? shardRange(total, options.shard) : { start: 0, end: total };
  const progress = startProgress(io, 'scan', { unit: 'cells' });
  let rows: LateralScanCell[];
  try {
    rows = core.lateralScanRows(engine, s, x, y, range, (d, t) => progress.update(d, t));
  } finally {
    progress.done();
  }
  if (options.shard) {
    const partial = await makePartial({
      command: 'scan',
      scenario: s,
      options: options.options as unknown as Record<string, unknown>,
      spec: options.shard,
      range,
      total,
      rows,
    });
    await writePartial(io, options.outFile, partial);
    return 0;
  }
  const r = core.finishLateralScan(x, y, rows);
  await writeText(io, options.outFile, options.json ? lateralScanJson(s, r) : renderLateralScan(s, r), 'scan');
  if (options.plotFile !== undefined) await writePlotFile(io, 'scan', options.plotFile, r);
  return 0;
}
