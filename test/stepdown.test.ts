// Step tolerance: the largest single permanent drop and rise met at the first touchdown that the
// policy survives for N further strides, checked by direct simulation, against the geometric
// bound on rises, energy conservation, published behaviour of swing-leg retraction, and bad input.
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { beforeAll, describe, expect, it, vi } from 'vitest';
import { pronk } from './pronk-cli.js';
import { MAX_GRID_POINTS, stepModel, stepTolerance, type StepToleranceResult } from '../src/core/analysis/stepdown.js';
import { loadEngine, rolloutInput } from '../src/core/engine.js';
import { InputError } from '../src/core/errors.js';
import { buildModel, DEG } from '../src/core/model.js';
import type { Scenario } from '../src/core/scenario.js';
import { L, scenario } from './helpers.js';

const m = 80;
const g = 9.81;
const integrator = { relative_tolerance: 1e-10, absolute_tolerance: 1e-12 };

/** Strides completed and status of one rollout from the start on one permanent step (signed ground height). */
async function onStep(s: Scenario, ground: number, strides: number) {
  const engine = await loadEngine();
  const b = engine.runBatch({ model: stepModel(buildModel(s), ground), inputs: rolloutInput(s.start.apex_height_m, s.start.forward_speed_m_per_s), strides, records: true });
  return { status: b.summaries[L.S_STATUS], completed: b.summaries[L.S_STRIDES_COMPLETED], records: b.records! };
}

// Seyfarth, Geyer, Günther, Blickhan 2002 (J. Biomech. 35(5):649–655): 80 kg, 1 m, 20 kN/m, 68°,
// at the energy of a 1 m apex at 5 m/s; started ON its stable fixed point (found by a long run).
let gait: Scenario;
let result: StepToleranceResult;
beforeAll(async () => {
  const engine = await loadEngine();
  const s = scenario({ integrator });
  const settle = engine.runBatch({ model: buildModel(s), inputs: rolloutInput(1, 5), strides: 300 });
  expect(Math.abs(settle.summaries[L.S_FINAL_HEIGHT] - settle.summaries[L.S_PREVIOUS_HEIGHT])).toBeLessThan(1e-9);
  gait = scenario({
    integrator,
    strides: 20,
    start: { apex_height_m: settle.summaries[L.S_FINAL_HEIGHT], forward_speed_m_per_s: settle.summaries[L.S_FINAL_SPEED] },
  });
  result = await stepTolerance(gait);
});

describe('the Seyfarth 2002 gait at its fixed point', () => {
  it('the largest rise is below the apex clearance (law: above it the leg cannot be placed)', () => {
    const clearance = gait.start.apex_height_m - Math.sin(68 * DEG); // law: touchdown at y = ground + L0 sin(attack)
    expect(result.apex_clearance_m).toBeCloseTo(clearance, 15);
    expect(clearance).toBeGreaterThan(0.012); // about 13 mm (measured 13.08 mm)
    expect(clearance).toBeLessThan(0.014);
    expect(result.max_step_up_m).toBeLessThan(clearance);
    expect(result.step_up.first_failure_m! - clearance).toBeGreaterThan(0);
    // just past the threshold the rise exceeds the clearance: the leg cannot be placed at stride 0
    expect(result.step_up.failure_just_past).toMatchObject({ reason: 'leg_not_placeable', failed_stride: 0 });
  });

  it('resolution <= 1 mm: Δ survives 1 + 20 strides and Δ + resolution fails, by direct simulation', async () => {
    expect(result.resolution_m).toBeLessThanOrEqual(0.001);
    expect(result.strides_after).toBe(20);
    for (const [delta, sign] of [[result.max_step_down_m, -1], [result.max_step_up_m, 1]] as const) {
      expect(delta).toBeGreaterThan(0);
      expect((await onStep(gait, sign * delta, 21)).status).toBe(L.STATUS_OK);
      expect((await onStep(gait, sign * (delta + result.resolution_m), 21)).status).not.toBe(L.STATUS_OK);
    }
    expect(result.step_down.first_failure_m).toBeCloseTo(result.max_step_down_m + 0.001, 12);
    expect(result.step_down.bounded_by).toBe('first_failure');
  });

  it('a finer resolution: the same checks at 0.25 mm, and the answer within 1 mm of the 1 mm one', async () => {
    const fine = await stepTolerance(gait, { resolution_m: 0.00025 });
    expect(fine.resolution_m).toBe(0.00025);
    for (const [delta, sign] of [[fine.max_step_down_m, -1], [fine.max_step_up_m, 1]] as const) {
      expect((await onStep(gait, sign * delta, 21)).status).toBe(L.STATUS_OK);
      expect((await onStep(gait, sign * (delta + 0.00025), 21)).status).not.toBe(L.STATUS_OK);
    }
    expect(Math.abs(fine.max_step_up_m - result.max_step_up_m)).toBeLessThan(0.001);
  });

  it('the answer depends on N: requiring more strides never raises it (law: surviving 1 + 50 strides implies surviving 1 + 20)', async () => {
    const longer = await stepTolerance(gait, { after: 50 });
    expect(longer.strides_after).toBe(50);
    expect(longer.max_step_down_m).toBeLessThanOrEqual(result.max_step_down_m);
    expect(longer.max_step_up_m).toBeLessThanOrEqual(result.max_step_up_m);
    // measured: drop 0.323 m for N = 20 but 0.275 m for N = 50; past 0.275 m the gait oscillates and fails late
  });

  it('new fixed point after the largest rise: same energy (law: energy conservation, no damping) and settling by its definition', async () => {
    const settle = result.step_up.settle;
    const fp = settle.new_fixed_point!;
    expect(fp).not.toBeNull();
    const energy = (y: number, v: number) => m * g * y + 0.5 * m * v * v; // potential from height 0 (absolute heights)
    const e0 = energy(gait.start.apex_height_m, gait.start.forward_speed_m_per_s);
    expect(Math.abs(energy(fp.apex_height_m, fp.forward_speed_m_per_s) - e0) / e0).toBeLessThan(1e-8);
    expect(fp.apex_above_ground_m).toBeCloseTo(fp.apex_height_m - result.max_step_up_m, 12);
    // independent recount of strides_to_settle from the records of the same long run
    const run = await onStep(gait, result.max_step_up_m, settle.strides);
    const apexAfter = (n: number) => (n === 0 ? gait.start.apex_height_m : run.records[(n - 1) * L.R_SIZE + L.R_NEXT_APEX_HEIGHT]);
    const n = settle.strides_to_settle!;
    for (let k = n; k <= settle.strides; k++) expect(Math.abs(apexAfter(k) - fp.apex_height_m)).toBeLessThanOrEqual(0.001);
    if (n > 0) expect(Math.abs(apexAfter(n - 1) - fp.apex_height_m)).toBeGreaterThan(0.001);
  });

  it('the coarse grid of both directions is ONE kernel call; bisection adds one call per halving', async () => {
    const engine = await loadEngine();
    const spy = vi.spyOn(engine, 'runBatch');
    try {
      await stepTolerance(gait);
      const [first] = spy.mock.calls[0];
      const models = first.model as unknown[];
      // drops every 5 mm up to the leg length (201 sizes), rises up to just past the clearance
      // (0, 5, 10, 14 mm), the flat ground shared
      expect(models.length).toBe(201 + 4 - 1);
      // 5 mm to 1 mm takes 3 halvings (law: ceil(log2 5)); plus the long settle run
      expect(spy.mock.calls.length).toBeLessThanOrEqual(1 + 3 + 1);
    } finally {
      spy.mockRestore();
    }
  });
});

describe('swing-leg retraction tolerates larger steps than the fixed angle (Seyfarth, Geyer, Herr 2003)', () => {
  it('60° at apex retracting at 50 °/s vs fixed 68°, both from 1 m at 5 m/s', async () => {
    // published trend (J. Exp. Biol. 206(15):2547–2555): retraction makes the spring-mass runner
    // robust to ground disturbances. Same body, start and energy; both have a stable gait here.
    // Measured: fixed 68° drop 0.212 m, rise 0.072 m; retraction drop 0.321 m, rise 0.133 m.
    const fixed = await stepTolerance(scenario({ integrator, strides: 20 }));
    const retract = await stepTolerance(
      scenario({ integrator, strides: 20, policy: { angle: { kind: 'retraction', attack_at_apex_deg: 60, rate_deg_per_s: 50 }, stiffness: { kind: 'constant' } } }),
    );
    expect(retract.max_step_down_m).toBeGreaterThan(fixed.max_step_down_m);
    expect(retract.max_step_up_m).toBeGreaterThan(fixed.max_step_up_m);
    expect(retract.survives_flat && fixed.survives_flat).toBe(true);
  });
});

describe('a policy that falls even without a step', () => {
  it('fixed 68° at 3 m/s: survives_flat false and both answers 0 (Seyfarth, Geyer, Herr 2003: no stable fixed-angle gait at 3 m/s)', async () => {
    // published trend; measured here: from a 1 m apex it falls backward in stride 2
    const slow = scenario({ integrator, strides: 20, start: { apex_height_m: 1, forward_speed_m_per_s: 3 } });
    expect((await onStep(slow, 0, 21)).status).not.toBe(L.STATUS_OK);
    const r = await stepTolerance(slow);
    expect(r.survives_flat).toBe(false);
    expect(r.max_step_down_m).toBe(0);
    expect(r.max_step_up_m).toBe(0);
    expect(r.step_down.failure_just_past?.reason).toBe('fell_backward');
  });
});

describe('the work is bounded by the physics, not by the resolution', () => {
  // from a 1e4 m apex the rise search range is the apex clearance, about 1e4 m (law: above it the
  // leg cannot be placed): 2e6 sizes at the default 5 mm spacing, so that direction's grid widens
  const high = scenario({ integrator, strides: 20, start: { apex_height_m: 1e4, forward_speed_m_per_s: 5 } });

  it('1e4 m apex: each direction scans at most MAX_GRID_POINTS sizes, the widened grid reported', async () => {
    const engine = await loadEngine();
    const spy = vi.spyOn(engine, 'runBatch');
    try {
      const r = await stepTolerance(high);
      const [first] = spy.mock.calls[0];
      expect((first.model as unknown[]).length).toBeLessThanOrEqual(2 * MAX_GRID_POINTS);
      const clearance = 1e4 - Math.sin(68 * DEG); // law: apex - L0 sin(attack)
      expect(r.apex_clearance_m).toBeCloseTo(clearance, 9);
      expect(r.step_up.grid_m).toBeGreaterThanOrEqual(clearance / MAX_GRID_POINTS);
      expect(r.step_up.grid_m).toBeLessThan((2 * clearance) / MAX_GRID_POINTS);
      expect(r.step_down.grid_m).toBe(0.005); // one leg length needs only 201 sizes
      expect(r.method).toMatch(/rises every 5\.\d+ m: at most 2000 sizes per direction/);
      // bisection from the widened spacing to 1 mm: ceil(log2(spacing / 1 mm)) halvings, one call each
      const halvings = Math.ceil(Math.log2(r.step_up.grid_m / 0.001));
      expect(spy.mock.calls.length).toBeLessThanOrEqual(1 + halvings + 1);
      expect(r.resolution_m).toBe(0.001);
    } finally {
      spy.mockRestore();
    }
  });

  it('an explicit grid too fine for the range is refused, naming the option and the spacing needed', async () => {
    const error = await stepTolerance(high, { grid_m: 0.005 }).catch((e: unknown) => e);
    expect(error).toBeInstanceOf(InputError);
    expect((error as InputError).issues[0].path).toBe('grid_m');
    expect((error as InputError).message).toMatch(/a spacing of at least 5\.\d+ m: the rise search range of 9999\.07\d* m holds at most 2000 coarse sizes/);
  });
});

describe('bad input', () => {
  it('a start apex below the touchdown height on flat ground is refused, naming start.apex_height_m', async () => {
    // valid as a scenario (its first touchdown is on a 0.1 m lower step), but steps are measured from flat ground
    const low = scenario({ start: { apex_height_m: 0.9, forward_speed_m_per_s: 5 }, terrain: { kind: 'steps', ground_heights_m: [-0.1] } });
    const error = await stepTolerance(low).catch((e: unknown) => e);
    expect(error).toBeInstanceOf(InputError);
    expect((error as InputError).issues[0].path).toBe('start.apex_height_m');
    expect((error as InputError).message).toMatch(/0\.92718/); // law: L0 sin 68°
  });

  it.each<[Record<string, number>, string]>([
    [{ after: 0 }, 'after'],
    [{ after: 2.5 }, 'after'],
    [{ after: 1001 }, 'after'], // MAX_AFTER: the work is bounded
    [{ settle_strides: 100_001 }, 'settle_strides'],
    [{ resolution_m: 0 }, 'resolution_m'],
    [{ resolution_m: NaN }, 'resolution_m'],
    [{ resolution_m: 0.5 }, 'resolution_m'],
    [{ grid_m: 0.0001 }, 'grid_m'],
    [{ settle_strides: 1 }, 'settle_strides'],
    [{ settle_band_m: -1 }, 'settle_band_m'],
  ])('stepTolerance(%j) throws an InputError naming %s', async (options, name) => {
    const error = await stepTolerance(scenario(), options).catch((e: unknown) => e);
    expect(error).toBeInstanceOf(InputError);
    expect((error as InputError).issues.map((issue) => issue.path)).toContain(name);
  });
});

// ---------------------------------------------------------------------------------------------
// The command, in-process with the real engine.

const directory = mkdtempSync(join(tmpdir(), 'pronk-stepdown-'));
const file = join(directory, 'seyfarth.json');
writeFileSync(file, JSON.stringify({ name: 'Seyfarth 2002 body', ...JSON.parse(JSON.stringify(scenario({ integrator, strides: 20 }))) }));

describe('pronk stepdown', () => {
  it('--json has the contract fields; --after N is passed through', async () => {
    const run = await pronk(['stepdown', file, '--json', '--after', '10']);
    expect(run.code).toBe(0);
    expect(run.stderr).toBe('');
    const out = JSON.parse(run.stdout);
    expect(out.strides_after).toBe(10);
    expect(out.max_step_down_m).toBeGreaterThan(0);
    expect(out.max_step_up_m).toBeGreaterThan(0);
    expect(out.note).toMatch(/depends on the number of strides/);
    expect(out.method).toMatch(/first failure boundary/);
    expect(out.caution).toBeTypeOf('string');
  });

  it('the terminal report names both thresholds, how it fails just past them, and the caution', async () => {
    const run = await pronk(['stepdown', file]);
    expect(run.code).toBe(0);
    expect(run.stdout).toMatch(/^ +drop +212\.0 +213\.0 +leg_not_placeable at stride \d+/m); // measured values of this scenario
    expect(run.stdout).toMatch(/^ +rise +72\.0 +73\.0 +leg_not_placeable at stride 0/m);
    expect(run.stdout).toContain('the first failure boundary');
    expect(run.stdout).toContain('Caution:');
  });

  it.each<[string[], RegExp]>([
    [['--after', '0'], /^pronk stepdown: --after: expected an integer from 1 to 1000, found "0"$/],
    [['--after', 'ten'], /--after: expected an integer from 1 to 1000, found "ten"/],
    [['--after', '2.5'], /--after: expected an integer from 1 to 1000, found "2.5"/],
    [['--resolution', '0'], /--resolution: expected a step size > 0 \(m\), found "0"/],
    [['--resolution', 'fine'], /--resolution: expected a step size > 0 \(m\), found "fine"/],
    [['--resolution', '0.5'], /--resolution: expected a step size from/],
    [['--grid', '0'], /--grid: expected a spacing > 0/],
    [['--settle-strides', '0'], /--settle-strides: expected an integer from 2/],
    // bounded so that a run finishes in seconds: 999999 strides after the step ran past 300 s
    [['--after', '999999'], /^pronk stepdown: --after: expected an integer from 1 to 1000, found "999999"$/],
    [['--after', '1001'], /--after: expected an integer from 1 to 1000, found "1001"/],
    [['--settle-strides', '1000000'], /--settle-strides: expected an integer from 2 to 100000, found "1000000"/],
    [['--settle-band=-1'], /--settle-band: expected a band > 0/],
  ])('stepdown FILE %j exits 2 naming the option', async (args, message) => {
    const run = await pronk(['stepdown', file, ...args]);
    expect(run.code).toBe(2);
    expect(run.stdout).toBe('');
    expect(run.stderr.trim()).toMatch(message);
    expect(run.stderr.split('\n').filter(Boolean)).toHaveLength(1);
  });

  it('a 1e5 m apex is outside the scenario bounds (exit 2 naming the field); from 1e4 m a too fine --grid names --grid', async () => {
    const far = join(directory, 'far.json');
    const body = JSON.parse(JSON.stringify(scenario({ integrator, strides: 20 })));
    writeFileSync(far, JSON.stringify({ ...body, start: { apex_height_m: 1e5, forward_speed_m_per_s: 5 } }));
    const refused = await pronk(['stepdown', far, '--json']);
    expect(refused.code).toBe(2);
    expect(refused.stderr).toMatch(/start\.apex_height_m: expected a number from -1e4 to 1e4 \(m\), found 100000/);
    writeFileSync(far, JSON.stringify({ ...body, start: { apex_height_m: 1e4, forward_speed_m_per_s: 5 } }));
    const fine = await pronk(['stepdown', far, '--grid', '0.001']);
    expect(fine.code).toBe(2);
    expect(fine.stderr.trim()).toMatch(/^pronk stepdown: --grid: expected a spacing of at least 5\.\d+ m: the rise search range/);
  });
});
