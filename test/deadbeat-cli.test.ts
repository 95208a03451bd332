// `pronk deadbeat` end to end: the built CLI (node bin/pronk.js, after `npm run build`) on the
// human-like body of Seyfarth et al. 2002: help, the --json fields, the --out result file and its
// round trip through `pronk simulate`, --compare, and bad options (exit 2 naming the option).
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import pkg from '../package.json' with { type: 'json' };
import { SAFETY_CAUTION } from '../src/core/safety.js';
import { parseScenario } from '../src/core/scenario.js';
import { contentHash } from '../src/core/version.js';

const repo = join(dirname(fileURLToPath(import.meta.url)), '..');
const bin = join(repo, 'bin', 'pronk.js');
const directory = mkdtempSync(join(tmpdir(), 'pronk-deadbeat-'));

interface Run {
  code: number;
  stdout: string;
  stderr: string;
}
function pronk(args: string[]): Run {
  const child = spawnSync(process.execPath, [bin, ...args], { encoding: 'utf8', cwd: directory, env: { ...process.env, PRONK_DEBUG: '' } });
  return { code: child.status ?? -1, stdout: child.stdout, stderr: child.stderr };
}
function writeJson(name: string, value: unknown): string {
  const path = join(directory, name);
  writeFileSync(path, JSON.stringify(value, null, 2));
  return path;
}

// Seyfarth, Geyer, Günther, Blickhan 2002 (J. Biomech. 35(5):649–655): 80 kg, 1 m, 20 kN/m, 1 m apex at 5 m/s
const seyfarth = {
  name: 'Seyfarth 2002 human-like runner',
  body: { mass_kg: 80, leg_length_m: 1, leg_stiffness_N_per_m: 20000, gravity_m_per_s2: 9.81 },
  start: { apex_height_m: 1, forward_speed_m_per_s: 5 },
  policy: { angle: { kind: 'fixed', attack_deg: 68 } },
  terrain: { kind: 'flat' },
  strides: 20,
};
const file = writeJson('seyfarth.json', seyfarth);
const small = ['--ground=-0.2:0.04', '--knots', '5', '--tolerance', '1e-5'];
const noStackTrace = /^\s+at\s|\.ts:\d+|\.js:\d+/m;

/** Paths of every null and every non-number where a number belongs, in a JSON value. */
function nullPaths(value: unknown, path = ''): string[] {
  if (value === null) return [path];
  if (Array.isArray(value)) return value.flatMap((v, i) => nullPaths(v, `${path}[${i}]`));
  if (typeof value === 'object') return Object.entries(value as object).flatMap(([k, v]) => nullPaths(v, path ? `${path}.${k}` : k));
  return [];
}

describe('pronk deadbeat', () => {
  it('--help prints the usage with every option, exit 0', () => {
    const run = pronk(['deadbeat', '--help']);
    expect(run.code).toBe(0);
    expect(run.stderr).toBe('');
    expect(run.stdout).toContain('Usage: pronk deadbeat [FILE] --ground LO:HI');
    for (const flag of ['--ground', '--mode', '--target', '--knots', '--tolerance', '--attack-range', '--compare', '--sigma', '--rollouts', '--seed', '--json', '--out']) {
      expect(run.stdout).toContain(flag);
    }
    expect(pronk(['--help']).stdout).toMatch(/^ {2}deadbeat\s/m);
  });

  it('--json: the table, loads, step check, caution and provenance; nothing else on stdout, no null numbers', async () => {
    const run = pronk(['deadbeat', file, ...small, '--json']);
    expect(run.code).toBe(0);
    expect(run.stderr).toBe('');
    const out = JSON.parse(run.stdout);
    expect(out).toMatchObject({
      mode: 'angle',
      target: { apex_height_m: 1, forward_speed_m_per_s: 5, height_reference: 'absolute' },
      ground_range_m: [-0.2, 0.04],
      unsolved: [],
      solved_range_m: [-0.2, 0.04],
      comparison: null,
      pronk_version: pkg.version,
      caution: SAFETY_CAUTION,
      options: { synthesis: { groundRange_m: [-0.2, 0.04], knots: 5, tolerance_m: 1e-5, mode: 'angle' }, after: 20, comparison: null },
    });
    expect(out.scenario_sha256).toBe(await contentHash(parseScenario(seyfarth)));
    expect(out.policy.angle.kind).toBe('time_table');
    expect(out.policy.angle.time_since_apex_s).toEqual(out.knots.map((k: { time_since_apex_s: number }) => k.time_since_apex_s));
    for (const field of ['ground_height_m', 'time_since_apex_s', 'attack_deg', 'next_apex_height_m', 'residual_height_m', 'peak_leg_force_N', 'peak_friction_ratio', 'max_compression_m']) {
      expect(typeof out.knots[0][field]).toBe('number');
    }
    expect(out.max_abs_residual_at_knots_m).toBeLessThan(1e-9); // the knots are solved to machine precision
    expect(out.max_abs_residual_between_knots_m).toBeLessThanOrEqual(1e-5); // --tolerance
    expect(out.loads.peak_leg_force_body_weights[1]).toBeCloseTo(out.loads.peak_leg_force_N[1] / (80 * 9.81), 9); // definition
    expect(out.step_check).toMatchObject({ strides: 21, all_survived: true, failures: [] });
    // what the table holds and where it stops being valid; how the refinement ended
    expect(out.validity).toMatchObject({ ground_reference: 'start_ground', valid_ground_m: [-0.2, 0.04] });
    expect(out.validity.valid_while).toMatch(/within -0\.2 to 0\.04 m of the start's ground/);
    expect(out.refinement).toMatchObject({ stopped_by: 'tolerance_met', max_knots: 4000, max_rounds: 12, tolerance_m: 1e-5, tolerance_floor_m: 1.01e-8 });
    expect(nullPaths(out)).toEqual(['comparison', 'options.comparison']);
    expect(run.stdout).not.toMatch(/NaN|Infinity/);
  });

  it('human output: target, mode, solved range, knots, residuals, loads, step check, caution', () => {
    const run = pronk(['deadbeat', file, ...small, '--mode', 'angle_and_stiffness']);
    expect(run.code).toBe(0);
    expect(run.stdout).toContain('next apex 1 m above the ground met, at 5 m/s');
    expect(run.stdout.replace(/\s+/g, ' ')).toContain('The table holds the next apex 1 m above the ground of the last touchdown, at 5 m/s');
    expect(run.stdout.replace(/\s+/g, ' ')).toContain("It is valid while each touchdown's ground is within -0.2 to 0.04 m of the previous touchdown's");
    expect(run.stdout).toContain('attack angle and extension stiffness');
    expect(run.stdout).toMatch(/solved -0\.2 to 0\.04 m/);
    expect(run.stdout).toMatch(/residual +apex error at the knots at most/);
    expect(run.stdout).toMatch(/peak leg force \d+ to \d+ N \([\d.]+ to [\d.]+ body weights\)/);
    expect(run.stdout).toMatch(/peak friction ratio/);
    expect(run.stdout).toMatch(/% of the leg/);
    expect(run.stdout).toContain('Step check: the table survived all');
    expect(run.stdout).toContain('Caution: Simulation results are not a guarantee');
  });

  it('--out writes a pronk-result file whose scenario + policy runs in `pronk simulate`; --compare adds the comparison', () => {
    const result = join(directory, 'deadbeat-result.json');
    const run = pronk(['deadbeat', file, ...small, '--compare', '--rollouts', '40', '--workers', '2', '--out', result]);
    expect(run.code).toBe(0);
    expect(run.stderr).toContain(`pronk deadbeat: result written to ${result}`);
    expect(run.stdout).toMatch(/^ {2}deadbeat table +[>= \d.]+ +[\d.]+ +\d+\/40 /m);
    expect(run.stdout).toMatch(/^ {2}best fixed angle /m);
    expect(run.stdout).toMatch(/^ {2}best retraction /m);
    expect(run.stdout).toMatch(/Took [\d.]+ s\./);
    const saved = JSON.parse(readFileSync(result, 'utf8'));
    expect(saved).toMatchObject({ format: 'pronk-result', format_version: 1, kind: 'deadbeat', pronk_version: pkg.version, caution: SAFETY_CAUTION });
    expect(new Date(saved.created).toISOString()).toBe(saved.created);
    expect(saved.scenario_sha256).toMatch(/^[0-9a-f]{64}$/);
    expect(saved.options.comparison).toMatchObject({ rollouts: 40 });
    expect(saved.comparison.policies.map((p: { name: string }) => p.name)).toEqual(['deadbeat_table', 'best_fixed_angle', 'best_retraction']);
    expect(saved.comparison.monte_carlo_method).toMatchObject({ rollouts: 40, sigma_m: 0.02, seed: 1, strides: 20 });
    expect(typeof saved.comparison.wall_time_s).toBe('number');
    // the policy from the file, on a step the solver never saw, through the public simulate command
    const stepped = writeJson('stepped.json', { ...saved.scenario, policy: saved.policy, terrain: { kind: 'steps', ground_heights_m: [-0.1234] }, strides: 3 });
    const sim = pronk(['simulate', stepped, '--json']);
    expect(sim.code).toBe(0);
    const apexes = JSON.parse(sim.stdout).apexes;
    expect(JSON.parse(sim.stdout).outcome.status).toBe('completed');
    expect(Math.abs(apexes[1].height_m - 1)).toBeLessThanOrEqual(1e-5); // the table's target, to --tolerance
  });

  it.each([
    [[], /--ground: expected ground heights LO:HI in metres \(required\)/],
    [['--ground=0.1:-0.1'], /--ground: expected two heights LO:HI in metres with LO < HI.*found "0\.1:-0\.1"/],
    [['--ground', 'low:high'], /--ground: expected two heights/],
    [['--ground=-0.1'], /--ground: expected two heights/],
    // found by the fuzz suite: ±1e308 was accepted and the unsolved range came out as "NaN to 1e+308 m"
    // (hi − lo overflows); ground heights are bounded as in a scenario (BOUNDS.height_m, ±1e4 m)
    [['--ground=-1e308:1e308'], /--ground: expected two heights \[lo, hi\] with lo < hi, each a height from -1e4 to 1e4 \(m\), found \[-1e\+308,1e\+308\]/],
    [['--ground=-0.1:10001'], /--ground: expected two heights \[lo, hi\] with lo < hi, each a height from -1e4 to 1e4 \(m\)/],
    [['--ground=-0.1:0.1', '--knots', '1'], /--knots: expected an integer from 2 to 2000, found "1"/],
    [['--ground=-0.1:0.1', '--knots', '2.5'], /--knots: expected an integer/],
    [['--ground=-0.1:0.1', '--tolerance', '0'], /--tolerance: expected a length > 0 \(m\), found "0"/],
    [['--ground=-0.1:0.1', '--tolerance=-1e-6'], /--tolerance: expected a length > 0/],
    [['--ground=-0.1:0.1', '--mode', 'stiffness'], /--mode: expected angle or angle_and_stiffness, found "stiffness"/],
    [['--ground=-0.1:0.1', '--tolerance', '1e-300'], /--tolerance: expected a length from 1\.01e-8 to 1 m \(the leg length\): at least 100 x the integrator's accuracy.*found 1e-300/],
    [['--ground=-0.1:0.1', '--target', 'above_ground_met'], /--target: expected absolute with --mode angle/],
    [['--ground=-0.1:0.1', '--mode', 'angle_and_stiffness', '--target', 'ground'], /--target: expected absolute or above_ground_met, found "ground"/],
    [['--ground=-0.1:0.1', '--attack-range=80:70'], /--attack-range: expected two angles LO:HI in degrees/],
    [['--ground=-0.1:0.1', '--attack-range=0:70'], /--attack-range: expected two angles/],
    [['--ground=-0.1:0.1', '--sigma', '0.01'], /--sigma: expected --compare alongside it/],
    [['--ground=-0.1:0.1', '--compare', '--rollouts', '0'], /--rollouts: expected an integer from 1 to 10000000, found "0"/],
    [['--ground=-0.1:0.1', '--compare', '--sigma=-1'], /--sigma: expected a finite number >= 0/],
    [['--ground=-0.1:0.1', '--compare', '--rate-range=5:1'], /--rate-range: expected two rates/],
    [['--ground=-0.1:0.1', '--after', '0'], /--after: expected an integer from 1/],
    // bounded so that a run finishes in bounded time: 999999 strides after each step ran about 20 minutes
    [['--ground=-0.1:0.1', '--after', '999999'], /--after: expected an integer from 1 to 1000, found "999999"/],
    [['--ground', '-0.1:0.1'], /--ground needs a value.*--ground=-0\.1:0\.1/],
    [['--grond=-0.1:0.1'], /unknown option --grond.*did you mean --ground/],
  ])('pronk deadbeat FILE %j exits 2 naming the option', (args, message) => {
    const run = pronk(['deadbeat', file, ...args]);
    expect(run.code).toBe(2);
    expect(run.stdout).toBe('');
    expect(run.stderr).toMatch(message);
    expect(run.stderr).not.toMatch(noStackTrace);
    expect(run.stderr.trim().split('\n')).toHaveLength(1);
  });
});
