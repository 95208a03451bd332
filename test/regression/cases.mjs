// The byte-for-byte regression cases: every CLI command's --json output (and the files it
// writes) on the demo scenario and on single-leg scenarios that reach every policy, stiffness
// and terrain kind. `node scripts/update-goldens.mjs` writes the goldens; test/regression.test.ts
// compares a fresh run with them byte for byte, timings aside (see TIMING_FIELDS).

import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';

const shipped = (file) => JSON.parse(readFileSync(fileURLToPath(new URL(`../../scenarios/${file}`, import.meta.url)), 'utf8'));
const demo = shipped('demo.json');

// Human-like reference body (Seyfarth et al. 2002's 80 kg, 1 m, 20 kN/m), fixed attack, flat.
const human = {
  name: 'regression: human-like body, fixed attack',
  body: { mass_kg: 80, leg_length_m: 1, leg_stiffness_N_per_m: 20000 },
  start: { apex_height_m: 1, forward_speed_m_per_s: 5 },
  policy: { angle: { kind: 'fixed', attack_deg: 68 }, stiffness: { kind: 'constant' } },
  terrain: { kind: 'flat' },
  strides: 12,
};

const variant = (name, patch) => ({ ...structuredClone(human), name: `regression: ${name}`, ...patch });

/** Scenario files the cases use, written into the run's folder under these names. */
export const SCENARIOS = {
  'demo.json': demo,
  'human.json': human,
  'split.json': variant('split stiffness, damping', {
    body: { mass_kg: 80, leg_length_m: 1, leg_stiffness_N_per_m: 20000, leg_damping_N_s_per_m: 40 },
    policy: {
      angle: { kind: 'retraction', attack_at_apex_deg: 66, rate_deg_per_s: 30, min_deg: 55, max_deg: 80 },
      stiffness: { kind: 'split', compression_N_per_m: 20000, extension_N_per_m: 20400 },
    },
    terrain: { kind: 'steps', ground_heights_m: [0, -0.02, -0.02, 0.01, 0] },
  }),
  'tables.json': variant('angle and stiffness time tables, random heights', {
    policy: {
      angle: { kind: 'time_table', time_since_apex_s: [0, 0.1, 0.2, 0.4], attack_deg: [70, 69, 67.5, 66] },
      stiffness: {
        kind: 'time_table',
        time_since_apex_s: [0, 0.2, 0.4],
        compression_N_per_m: [19000, 20000, 21000],
        extension_N_per_m: [19500, 20500, 21500],
      },
    },
    terrain: { kind: 'random_heights', sigma_m: 0.01, seed: 7 },
  }),
};

const study = {
  name: 'regression: small retraction study',
  scenario_file: 'demo.json',
  free_parameters: [
    { path: 'policy.angle.attack_at_apex_deg', lower: 58, upper: 72 },
    { path: 'policy.angle.rate_deg_per_s', lower: 0, upper: 120 },
  ],
  objective: {
    terms: [{ kind: 'survival', weight: 1, terrain: 'random_walk', sigma_m: 0.01, rollouts: 24, strides: 10 }],
  },
  constraints: { max_leg_force_N: 900, friction_coefficient: 0.8 },
  search: { method: 'COBYLA', max_evaluations: 30, xtol_rel: 0.001, restarts: 2 },
  seed: 11,
  holdout: { seed: 12, rollouts: 60 },
};
SCENARIOS['study.json'] = study;
// the other model kinds' shipped demos: the two-leg model walking and running, the lateral model
SCENARIOS['biped-walk.json'] = shipped('demo-biped.json');
SCENARIOS['biped-run.json'] = shipped('demo-biped-run.json');
SCENARIOS['hexapod.json'] = shipped('demo-hexapod.json');

/**
 * Each case: a name, the arguments after `pronk`, and the files it writes (compared too).
 * Cases run in order in one folder, so a later case may read an earlier case's file.
 */
export const CASES = [];
for (const file of ['demo.json', 'human.json', 'split.json', 'tables.json']) {
  const stem = file.replace('.json', '');
  CASES.push({ name: `simulate-${stem}`, args: ['simulate', file, '--json'] });
  CASES.push({ name: `map-${stem}`, args: ['map', file, '--json', '--samples', '61', '--iterations', '8'] });
}
for (const file of ['biped-walk.json', 'biped-run.json', 'hexapod.json']) {
  const stem = file.replace('.json', '');
  CASES.push({ name: `simulate-${stem}`, args: ['simulate', file, '--json'] });
  // rollouts in lanes (more than 4), every stride of most of them run
  const disturbance = stem === 'hexapod' ? ['--kick-left', '0.1'] : ['--sigma', stem === 'biped-walk' ? '0.001' : '0.005'];
  CASES.push({ name: `robustness-${stem}`, args: ['robustness', file, '--json', '--rollouts', '24', ...disturbance, '--workers', '1'] });
}
CASES.push(
  { name: 'simulate-trace', args: ['simulate', 'human.json', '--json', '--strides', '2', '--trace-interval', '0.01'] },
  { name: 'map-approx', args: ['map', 'human.json', '--json', '--samples', '41', '--approx'] },
  {
    name: 'scan-demo',
    args: ['scan', 'demo.json', '--json', '--x', 'policy.angle.attack_at_apex_deg:58:72:5', '--y', 'start.forward_speed_m_per_s:2.5:4:4', '--samples', '41', '--workers', '1'],
  },
  {
    name: 'basin-demo',
    args: ['basin', 'demo.json', '--json', '--heights', '0.4:0.6:6', '--speeds', '2.5:4:5', '--strides', '12', '--workers', '1'],
  },
  { name: 'basin-energy', args: ['basin', 'human.json', '--json', '--energy', '--heights', '0.9:1.3:9', '--workers', '1'] },
  {
    name: 'basin-shard-1',
    args: ['basin', 'demo.json', '--heights', '0.4:0.6:6', '--speeds', '2.5:4:5', '--strides', '12', '--workers', '1', '--shard', '1/2', '--out', 'basin-1.json'],
    files: ['basin-1.json'],
  },
  {
    name: 'basin-shard-2',
    args: ['basin', 'demo.json', '--heights', '0.4:0.6:6', '--speeds', '2.5:4:5', '--strides', '12', '--workers', '1', '--shard', '2/2', '--out', 'basin-2.json'],
    files: ['basin-2.json'],
  },
  { name: 'robustness-shard-1', args: ['robustness', 'demo.json', '--rollouts', '30', '--sigma', '0.01', '--workers', '1', '--shard', '1/2', '--out', 'mc-1.json'], files: ['mc-1.json'] },
  { name: 'robustness-shard-2', args: ['robustness', 'demo.json', '--rollouts', '30', '--sigma', '0.01', '--workers', '1', '--shard', '2/2', '--out', 'mc-2.json'], files: ['mc-2.json'] },
  { name: 'merge-robustness', args: ['merge', 'mc-1.json', 'mc-2.json', '--json'] },
  { name: 'simulate-demo-text', args: ['simulate', 'demo.json'] },
  { name: 'map-demo-text', args: ['map', 'demo.json', '--samples', '61', '--plot', 'map-demo.svg'], files: ['map-demo.svg'] },
  { name: 'merge-basin', args: ['merge', 'basin-1.json', 'basin-2.json', '--json'] },
  { name: 'stepdown-demo', args: ['stepdown', 'demo.json', '--json', '--grid', '0.02', '--resolution', '0.005'] },
  { name: 'robustness-demo', args: ['robustness', 'demo.json', '--json', '--rollouts', '60', '--sigma', '0.01', '--workers', '1'] },
  {
    name: 'robustness-heights',
    args: ['robustness', 'split.json', '--json', '--rollouts', '40', '--terrain', 'random_heights', '--sigma', '0.01', '--seed', '3', '--workers', '1'],
  },
  { name: 'deadbeat-demo', args: ['deadbeat', 'demo.json', '--json', '--ground=-0.05:0.02', '--knots', '5', '--out', 'deadbeat-result.json'], files: ['deadbeat-result.json'] },
  { name: 'optimize-study', args: ['optimize', 'study.json', '--json', '--workers', '1', '--out', 'optimize-result.json'], files: ['optimize-result.json'] },
  { name: 'export-c-demo', args: ['export', 'demo.json', '--format', 'c', '--out', 'demo_policy.h', '--points', '33', '--json'], files: ['demo_policy.h', 'demo_policy.c'] },
  { name: 'export-json-tables', args: ['export', 'tables.json', '--format', 'json', '--out', 'tables-policy.json', '--json'], files: ['tables-policy.json'] },
  { name: 'export-csv-tables', args: ['export', 'tables.json', '--format', 'csv', '--out', 'tables-policy.csv', '--points', '17', '--json'], files: ['tables-policy.csv'] },
  { name: 'export-c-optimized', args: ['export', 'optimize-result.json', '--format', 'c', '--out', 'opt.h', '--max-error', '0.001', '--json'], files: ['opt.h', 'opt.c'] },
  { name: 'export-c-deadbeat', args: ['export', 'deadbeat-result.json', '--format', 'c', '--out', 'db.h', '--json'], files: ['db.h', 'db.c'] },
);

/**
 * Fields that hold wall-clock times, dates or the machine's state: their values are replaced by
 * a marker before comparing. Everything else must match byte for byte.
 */
export const TIMING_FIELDS = ['seconds', 'date', 'phase_seconds', 'elapsed_s', 'wall_seconds', 'cpu_seconds', 'generated_at'];
