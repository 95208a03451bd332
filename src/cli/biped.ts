// Terminal views of the two-leg model's results: `simulate` (per stride: the gait, each leg's
// touchdown, liftoff and peak force, the double-support interval) and `map` (every fixed point
// with all eigenvalues of the reduced map and the full map's energy eigenvalue).

import type { BipedMapResult } from '../core/analysis/biped-map.js';
import type { Eigenvalue } from '../core/eigen.js';
import { type BipedScenario, legParameters } from '../core/models/biped.js';
import type { BipedSimulationResult } from '../core/models/biped-simulate.js';
import { SAFETY_CAUTION } from '../core/safety.js';
import { accuracyFields, count, fields, fixed, plain, table, wrap, type Column } from './format.js';
import { describeAngle, describeStiffness, describeTerrain } from './describe.js';

const TEXT_WIDTH = 96;
const MAX_ROWS_SHOWN = 60;
const HEAD_ROWS = 40;
const TAIL_ROWS = 10;

function describeLegs(s: BipedScenario): string {
  const [left, right] = legParameters(s);
  const one = (name: string, l: (typeof left)) =>
    `${name} ${plain(l.length_m)} m x${plain(l.stiffness_scale)} stiffness${l.damping_N_s_per_m > 0 ? `, damping ${plain(l.damping_N_s_per_m)} N s/m` : ''}`;
  return `${one('left', left)}; ${one('right', right)}`;
}

function header(s: BipedScenario, extra: [string, string][]): string {
  return [
    s.name ?? 'Unnamed scenario',
    fields([
      ['model', 'two spring legs on a point mass (biped)'],
      ['body', `${plain(s.body.mass_kg)} kg, stiffness ${plain(s.body.leg_stiffness_N_per_m)} N/m, gravity ${plain(s.body.gravity_m_per_s2)} m/s^2`],
      ['legs', describeLegs(s)],
      ['policy', `${describeAngle(s.policy.angle)} (swing leg, time from the section); ${describeStiffness(s.policy.stiffness, s)}`],
      ['terrain', describeTerrain(s.terrain)],
      ...extra,
    ]),
  ].join('\n');
}

const STRIDE_COLUMNS: Column[] = [
  { title: 'stride', unit: '', align: 'left' },
  { title: 'gait', unit: '', align: 'left' },
  { title: 'height', unit: 'm' },
  { title: 'speed', unit: 'm/s' },
  { title: 'offset', unit: 'mm' },
  { title: 'lands', unit: '', align: 'left' },
  { title: 'attack', unit: 'deg' },
  { title: 'touchdown', unit: 'ms' },
  { title: 'double support', unit: 'ms', align: 'left' },
  { title: 'stride', unit: 'ms' },
  { title: 'peak L', unit: 'N' },
  { title: 'peak R', unit: 'N' },
  { title: 'vertical', unit: 'x weight' },
];

export function renderBipedSimulation(s: BipedScenario, result: BipedSimulationResult, stridesRequested: number): string {
  const weight = s.body.mass_kg * s.body.gravity_m_per_s2;
  const st = s.start;
  const head = header(s, [
    [
      'start',
      `${st.gait === 'walking' ? `single-support apex on the ${st.leg} leg, offset ${plain(st.offset_m)} m` : st.leg === 'both' ? 'flight apex, both legs land together' : `flight apex, ${st.leg} leg lands first`}, ` +
        `height ${plain(st.apex_height_m)} m at ${plain(st.forward_speed_m_per_s)} m/s, energy ${fixed(result.energy_J, 2)} J; ${count(stridesRequested, 'stride')} requested`,
    ],
    ...accuracyFields(result.integrator),
  ]);
  const start = result.sections[0];
  const rows: (string[] | string)[] = [
    ['start', '', fixed(start.height_m, 4), fixed(start.forward_speed_m_per_s, 3), start.offset_m === null ? '-' : fixed(start.offset_m * 1000, 1), ...new Array(8).fill('')],
  ];
  const strideRows = result.strides.map((stride, i) => {
    const next = result.sections[i + 1];
    const ds = stride.double_support;
    return [
      String(stride.index),
      stride.gait,
      fixed(next?.height_m, 4),
      fixed(next?.forward_speed_m_per_s, 3),
      next ? (next.offset_m === null ? '-' : fixed(next.offset_m * 1000, 1)) : '',
      stride.touchdown_leg ?? '-',
      fixed(stride.attack_deg, 2),
      stride.section_to_touchdown_s === null ? '-' : fixed(stride.section_to_touchdown_s * 1000, 1),
      ds ? `${fixed(ds.start_s * 1000, 1)}-${Number.isFinite(ds.end_s) ? fixed(ds.end_s * 1000, 1) : '?'}` : '-',
      stride.stride_s === null ? '-' : fixed(stride.stride_s * 1000, 1),
      fixed(stride.peak_leg_force_N.left, 1),
      fixed(stride.peak_leg_force_N.right, 1),
      fixed(stride.peak_vertical_force_N / weight, 2),
    ];
  });
  if (strideRows.length > MAX_ROWS_SHOWN) {
    rows.push(
      ...strideRows.slice(0, HEAD_ROWS),
      `... ${count(strideRows.length - HEAD_ROWS - TAIL_ROWS, 'stride')} not shown (--json lists every stride) ...`,
      ...strideRows.slice(-TAIL_ROWS),
    );
  } else rows.push(...strideRows);
  const o = result.outcome;
  const outcome =
    o.status === 'completed'
      ? `Outcome: completed ${count(o.strides_completed, 'stride')}.`
      : `Outcome: failed at stride ${o.failed_stride} (${o.reason}): ${o.detail}; ${count(o.strides_completed, 'stride')} completed.`;
  return [
    head,
    '',
    'Heights, speeds and offsets are the section each stride reaches; touchdown and double-support times are from the stride\'s section.',
    table(STRIDE_COLUMNS, rows),
    '',
    outcome,
    '',
    wrap(SAFETY_CAUTION, TEXT_WIDTH, 'Caution: ', '  '),
    '',
  ].join('\n');
}

function eigenText(e: Eigenvalue): string {
  const v = e.im === 0 ? fixed(e.re, 5) : `${fixed(e.re, 5)}${e.im < 0 ? '-' : '+'}${fixed(Math.abs(e.im), 5)}i`;
  return `${v} (|${fixed(e.modulus, 4)}|)`;
}

const FIXED_POINT_COLUMNS: Column[] = [
  { title: 'height', unit: 'm' },
  { title: 'speed', unit: 'm/s' },
  { title: 'offset', unit: 'mm' },
  { title: 'stable', unit: '' },
  { title: 'eigenvalues (reduced map)', unit: '', align: 'left' },
  { title: '|λ-1| full', unit: '' },
  { title: 'stride', unit: 'ms' },
  { title: 'double', unit: 'ms' },
  { title: 'force humps', unit: 'x weight', align: 'left' },
];

export function renderBipedMap(s: BipedScenario, result: BipedMapResult): string {
  const weight = s.body.mass_kg * s.body.gravity_m_per_s2;
  const walking = result.gait === 'walking';
  const d = result.domain;
  const lines = [
    header(s, [
      ['energy', `${fixed(result.energy_J, 3)} J, from the start ${walking ? 'single-support' : 'flight'} apex`],
      [
        'section',
        !result.energy_conserving
          ? `${walking ? 'single-support' : 'flight'} apex; the energy is not conserved (damping or split stiffness): the full map in (${result.reduced_state.join(', ')})`
          : walking
            ? 'single-support apex; reduced state (height, offset), speed from the energy'
            : 'flight apex; reduced state (height), speed from the energy',
      ],
      ['map', `${count(result.map_strides, 'stride')} per application${result.map_strides === 2 ? ' (the legs differ: a whole gait cycle)' : ''}, flat ground`],
      [
        'domain',
        `heights ${fixed(d.height_low_m, 4)} to ${fixed(d.height_high_m, 4)} m${walking ? `, offsets ${fixed(d.offset_low_m, 3)} to ${fixed(d.offset_high_m, 3)} m` : ''}`,
      ],
      ['samples', `${result.scan.length} on the symmetric line, ${result.scan.filter((x) => x.next_height_m !== null).length} reach the section`],
    ]),
    '',
  ];
  if (result.fixed_points.length === 0) lines.push('Fixed points: none found at this energy.');
  else {
    lines.push(
      `Fixed points (${result.fixed_points.length}), stable when every eigenvalue of the reduced map lies inside the unit circle:`,
      table(
        FIXED_POINT_COLUMNS,
        result.fixed_points.map((f) => [
          fixed(f.height_m, 6),
          fixed(f.speed_m_per_s, 4),
          fixed(f.offset_m * 1000, 3),
          f.stable ? 'yes' : 'no',
          f.eigenvalues.map(eigenText).join('; '),
          Number.isFinite(f.energy_eigenvalue_deviation) ? f.energy_eigenvalue_deviation.toExponential(1) : '-',
          fixed(f.stride_s * 1000, 1),
          f.double_support_s === null ? '-' : fixed(f.double_support_s * 1000, 1),
          f.leg_vertical_force_peaks_N.map((p) => fixed(p / weight, 2)).join(', '),
        ]),
        '  ',
      ),
    );
  }
  const last = result.staircase[result.staircase.length - 1];
  lines.push(
    '',
    `Staircase from the start: ${count(result.staircase.length - 1, 'stride')}, ${result.staircase_outcome}; last section at ` +
      `${fixed(last.height_m, 6)} m, ${fixed(last.speed_m_per_s, 4)} m/s${walking ? `, offset ${fixed(last.offset_m * 1000, 3)} mm` : ''}.`,
    '',
    wrap(SAFETY_CAUTION, TEXT_WIDTH, 'Caution: ', '  '),
    '',
  );
  return lines.join('\n');
}
