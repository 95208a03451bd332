// Monte Carlo terrain robustness: determinism (workers, shards, common random numbers), the
// statistics against their definitions, published behaviour of swing-leg retraction, and bad input.
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { described, jsonText } from '../src/core/json-output.js';
import { pronk } from './pronk-cli.js';
import {
  CHUNK_ROLLOUTS,
  canonicalRobustnessOptions,
  finishRobustness,
  robustnessModel,
  robustnessRows,
  terrainRobustness,
  type RobustnessOptions,
  type RobustnessResult,
} from '../src/core/analysis/robustness.js';
import { loadEngine, rolloutInput } from '../src/core/engine.js';
import { InputError } from '../src/core/errors.js';
import { joinShards, shardRange, type PartialResult } from '../src/core/shard.js';
import { wilsonInterval } from '../src/core/stats.js';
import { CancelledError, closeWorkerPool } from '../src/worker/pool.js';
import { L, scenario } from './helpers.js';

afterAll(() => closeWorkerPool());

// Seyfarth, Geyer, Günther, Blickhan 2002 (J. Biomech. 35(5):649–655): 80 kg, 1 m, 20 kN/m,
// g 9.81, 68°, at the energy of a 1 m apex at 5 m/s (test/helpers.ts), default tolerances.
const integrator = { relative_tolerance: 1e-10, absolute_tolerance: 1e-12 };
const fixed68 = scenario({ strides: 20, integrator });
// Seyfarth, Geyer, Herr 2003 (J. Exp. Biol. 206(15):2547–2555): attack 60° at apex, retracting
// at 50 °/s; at this energy it has a stable gait whose apex (0.998 m) is close to the start.
const retraction = scenario({
  strides: 20,
  integrator,
  policy: { angle: { kind: 'retraction', attack_at_apex_deg: 60, rate_deg_per_s: 50 }, stiffness: { kind: 'constant' } },
});

const bits = (result: RobustnessResult) => JSON.stringify(result); // JSON numbers round-trip doubles exactly

describe('determinism', () => {
  const options: RobustnessOptions = { rollouts: 240, sigma_m: 0.006, seed: 7, strides: 12 };

  it('the same seed gives bit-identical results on 1, 2 and 4 workers', async () => {
    const one = await terrainRobustness(fixed68, options, { workers: 1 });
    // the run must mix survivors and failures for the comparison to mean something
    expect(one.survived).toBeGreaterThan(0);
    expect(one.survived).toBeLessThan(one.rollouts);
    for (const workers of [2, 4]) expect(bits(await terrainRobustness(fixed68, options, { workers }))).toBe(bits(one));
  });

  it('a run in this thread, tallied chunk by chunk, equals the tally of all its rows and a run on workers, bit for bit', async () => {
    // more rollouts than a chunk, the last chunk partial: the sums are added in rollout order either way
    const many: RobustnessOptions = { rollouts: 2 * CHUNK_ROLLOUTS + 77, sigma_m: 0.012, seed: 11, strides: 5 };
    const progress: [number, number][] = [];
    const chunked = await terrainRobustness(fixed68, many, { workers: 1, onProgress: (done, total) => progress.push([done, total]) });
    expect(chunked.survived).toBeGreaterThan(0);
    expect(chunked.survived).toBeLessThan(chunked.rollouts);
    const rows = await robustnessRows(fixed68, many, undefined, { workers: 1 });
    expect(bits(chunked)).toBe(bits(await finishRobustness(fixed68, many, rows)));
    expect(bits(await terrainRobustness(fixed68, many, { workers: 2 }))).toBe(bits(chunked));
    const total = many.rollouts!;
    expect(progress).toEqual([[CHUNK_ROLLOUTS, total], [2 * CHUNK_ROLLOUTS, total], [total, total]]);
    // a cancel between chunks ends the run with the pool's CancelledError
    const controller = new AbortController();
    const cancelled = terrainRobustness(fixed68, many, { workers: 1, signal: controller.signal, onProgress: () => controller.abort() });
    await expect(cancelled).rejects.toBeInstanceOf(CancelledError);
  });

  it('3 shards joined (joinShards + finishRobustness) equal one run exactly', async () => {
    const canonical = canonicalRobustnessOptions(fixed68, options);
    const parts: { source: string; partial: PartialResult }[] = [];
    for (let index = 3; index >= 1; index--) {
      // shards made out of order, on different worker counts
      const range = shardRange(canonical.rollouts, { index, count: 3 });
      const rows = await robustnessRows(fixed68, canonical, range, { workers: index });
      const partial: PartialResult = {
        format: 'pronk-partial',
        format_version: 1,
        command: 'robustness',
        pronk_version: 'test',
        scenario_sha256: 'same',
        scenario: fixed68,
        options: { ...canonical },
        shard: { index, count: 3, start: range.start, end: range.end, total: canonical.rollouts },
        rows: JSON.parse(JSON.stringify(rows)), // as read back from a file
      };
      parts.push({ source: `shard-${index}.json`, partial });
    }
    const joined = joinShards(parts);
    const merged = await finishRobustness(fixed68, joined.options as unknown as RobustnessOptions, joined.rows as never);
    expect(bits(merged)).toBe(bits(await terrainRobustness(fixed68, options, { workers: 1 })));
  });

  it('a policy comparison on one seed is deterministic, and both policies meet the same terrain (common random numbers)', async () => {
    const o: RobustnessOptions = { rollouts: 100, sigma_m: 0.008, seed: 3, strides: 15 };
    const first = [await terrainRobustness(fixed68, o), await terrainRobustness(retraction, o)];
    const second = [await terrainRobustness(fixed68, o), await terrainRobustness(retraction, o)];
    expect(first.map(bits)).toEqual(second.map(bits));
    // the ground met at touchdown i of rollout r is the same for both policies while both run
    const engine = await loadEngine();
    const canonical = canonicalRobustnessOptions(fixed68, o);
    const inputs = new Float64Array(o.rollouts * L.I_SIZE);
    for (let r = 0; r < o.rollouts; r++) inputs.set(rolloutInput(1, 5, r), r * L.I_SIZE);
    const grounds = [fixed68, retraction].map((s) => {
      const b = engine.runBatch({ model: robustnessModel(s, canonical), inputs, strides: 15, records: true });
      return (r: number, i: number) => b.records![(r * 15 + i) * L.R_SIZE + L.R_GROUND];
    });
    let compared = 0;
    for (let r = 0; r < o.rollouts; r++) {
      for (let i = 0; i < 15; i++) {
        const a = grounds[0](r, i);
        const b = grounds[1](r, i);
        if (Number.isNaN(a) || Number.isNaN(b)) break; // a rollout ended
        expect(a).toBe(b);
        compared++;
      }
    }
    expect(compared).toBeGreaterThan(500);
  });
});

describe('statistics against their definitions', () => {
  let result: RobustnessResult;
  let records: Float64Array;
  let summaries: Float64Array;
  const o: RobustnessOptions = { rollouts: 150, sigma_m: 0.006, seed: 11, strides: 10, target_height_m: 0.94, target_speed_m_per_s: 5.1 };
  beforeAll(async () => {
    result = await terrainRobustness(fixed68, o);
    const engine = await loadEngine();
    const inputs = new Float64Array(o.rollouts * L.I_SIZE);
    for (let r = 0; r < o.rollouts; r++) inputs.set(rolloutInput(1, 5, r), r * L.I_SIZE);
    const b = engine.runBatch({ model: robustnessModel(fixed68, canonicalRobustnessOptions(fixed68, o)), inputs, strides: 10, records: true });
    records = b.records!;
    summaries = b.summaries;
  });

  it('survival, Wilson interval, mean strides and failure counts (law: counting over the rollouts)', () => {
    let survived = 0;
    let strides = 0;
    const failures: Record<string, number> = {};
    for (let r = 0; r < o.rollouts; r++) {
      const status = summaries[r * L.S_SIZE + L.S_STATUS];
      if (status === L.STATUS_OK) survived++;
      strides += summaries[r * L.S_SIZE + L.S_STRIDES_COMPLETED];
      if (status !== L.STATUS_OK) failures[status] = (failures[status] ?? 0) + 1;
    }
    expect(result.rollouts).toBe(150);
    expect(result.survived).toBe(survived);
    expect(result.survival).toBe(survived / 150);
    expect(result.wilson95).toEqual(wilsonInterval(survived, 150));
    expect(result.mean_strides_completed).toBe(strides / 150);
    expect(Object.values(result.failures).reduce((a, b) => a + b, 0)).toBe(150 - survived);
    expect(result.failures.leg_not_placeable).toBe(failures[L.STATUS_LEG_NOT_PLACEABLE] ?? 0);
    expect(Object.keys(result.failures)).not.toContain('completed');
  });

  it('apex RMS about the target from the stride records: sqrt(mean square over completed strides)', () => {
    let sumH = 0;
    let sumV = 0;
    let n = 0;
    for (let r = 0; r < o.rollouts; r++) {
      for (let s = 0; s < 10; s++) {
        const at = (r * 10 + s) * L.R_SIZE;
        if (records[at + L.R_STATUS] !== L.STATUS_OK || Number.isNaN(records[at + L.R_NEXT_APEX_HEIGHT])) break;
        sumH += (records[at + L.R_NEXT_APEX_HEIGHT] - 0.94) ** 2;
        sumV += (records[at + L.R_NEXT_APEX_SPEED] - 5.1) ** 2;
        n++;
      }
    }
    expect(result.strides_completed_total).toBe(n);
    expect(Math.abs(result.apex_height_rms_m! - Math.sqrt(sumH / n))).toBeLessThan(1e-12 * Math.sqrt(sumH / n));
    expect(Math.abs(result.forward_speed_rms_m_per_s! - Math.sqrt(sumV / n))).toBeLessThan(1e-12 * Math.sqrt(sumV / n));
    expect(result.target).toEqual({ apex_height_m: 0.94, forward_speed_m_per_s: 5.1 });
  });

  it('survival_by_stride: rollouts still running after each stride, non-increasing, ending at the survival', () => {
    const by = result.survival_by_stride;
    expect(by).toHaveLength(10);
    for (let s = 0; s < 10; s++) {
      let running = 0;
      for (let r = 0; r < o.rollouts; r++) if (summaries[r * L.S_SIZE + L.S_STRIDES_COMPLETED] > s) running++;
      expect(by[s]).toEqual({ stride: s, running, survival: running / 150, wilson95: wilsonInterval(running, 150) });
      if (s > 0) expect(by[s].running).toBeLessThanOrEqual(by[s - 1].running);
    }
    expect(by[9].running).toBe(result.survived);
  });
});

describe('behaviour', () => {
  it('sigma 0 from the stable fixed point on flat ground survives 100 % with zero apex error (law: a fixed point of the apex map)', async () => {
    const engine = await loadEngine();
    const settle = engine.runBatch({ model: robustnessModel(fixed68, canonicalRobustnessOptions(fixed68, { rollouts: 1, sigma_m: 0, seed: 0 })), inputs: rolloutInput(1, 5), strides: 300 });
    const apex = settle.summaries[L.S_FINAL_HEIGHT];
    const speed = settle.summaries[L.S_FINAL_SPEED];
    expect(Math.abs(apex - settle.summaries[L.S_PREVIOUS_HEIGHT])).toBeLessThan(1e-9); // converged
    const atFixedPoint = scenario({ strides: 20, integrator, start: { apex_height_m: apex, forward_speed_m_per_s: speed } });
    for (const terrain of ['random_walk', 'random_heights'] as const) {
      const r = await terrainRobustness(atFixedPoint, { rollouts: 100, sigma_m: 0, seed: 5, terrain });
      expect(r.survived).toBe(100);
      expect(r.wilson95[1]).toBe(1);
      expect(r.wilson95[0]).toBeCloseTo(100 / (100 + 1.959963984540054 ** 2), 14); // closed form at k = n
      expect(r.apex_height_rms_m!).toBeLessThan(1e-8);
      expect(r.forward_speed_rms_m_per_s!).toBeLessThan(1e-8);
    }
  });

  it('survival falls as sigma grows (same seed, common random numbers)', async () => {
    // measured: 0.001 → 1.00, 0.004 → 0.985, 0.007 → 0.585, 0.01 → 0.18, 0.02 → 0
    const sigmas = [0.001, 0.004, 0.007, 0.01, 0.02];
    const survival: number[] = [];
    for (const sigma_m of sigmas) survival.push((await terrainRobustness(fixed68, { rollouts: 200, sigma_m, seed: 1 })).survival);
    for (let i = 1; i < survival.length; i++) expect(survival[i]).toBeLessThanOrEqual(survival[i - 1]);
    expect(survival[0]).toBeGreaterThan(0.9);
    expect(survival[survival.length - 1]).toBeLessThan(0.1);
  });

  it('swing-leg retraction survives random terrain better than the fixed angle (Seyfarth, Geyer, Herr 2003)', async () => {
    // published trend: retraction stabilizes running against ground disturbances. Same start
    // (1 m, 5 m/s), same energy, same terrains. Measured: fixed 68° 0.125 (Wilson 0.086–0.178,
    // 9.9 strides on average), retraction 1.00 (0.981–1, all 20 strides).
    const o: RobustnessOptions = { rollouts: 200, sigma_m: 0.01, seed: 2026, strides: 20 };
    const f = await terrainRobustness(fixed68, o);
    const r = await terrainRobustness(retraction, o);
    expect(r.wilson95[0]).toBeGreaterThan(f.wilson95[1]); // the 95 % intervals do not overlap
    expect(r.mean_strides_completed).toBeGreaterThan(f.mean_strides_completed);
  });

  it('the scenario\'s own terrain is replaced (a steps scenario runs on the random terrain)', async () => {
    const stepped = scenario({ strides: 10, integrator, terrain: { kind: 'steps', ground_heights_m: [0, -0.5] } });
    const o: RobustnessOptions = { rollouts: 50, sigma_m: 0.004, seed: 9, strides: 10 };
    expect(bits(await terrainRobustness(stepped, o))).toBe(bits(await terrainRobustness(scenario({ strides: 10, integrator }), o)));
    expect((await terrainRobustness(stepped, o)).note).toMatch(/replaced/);
  });
});

describe('bad input', () => {
  it.each<[RobustnessOptions, string]>([
    [{ rollouts: 0, sigma_m: 0.01, seed: 1 }, 'rollouts'],
    [{ rollouts: 2.5, sigma_m: 0.01, seed: 1 }, 'rollouts'],
    [{ rollouts: 10, sigma_m: -0.01, seed: 1 }, 'sigma_m'],
    [{ rollouts: 10, sigma_m: NaN, seed: 1 }, 'sigma_m'],
    [{ rollouts: 10, sigma_m: 0.01, seed: -1 }, 'seed'],
    [{ rollouts: 10, sigma_m: 0.01, seed: 2 ** 53 }, 'seed'],
    [{ rollouts: 10, sigma_m: 0.01, seed: 1, strides: 0 }, 'strides'],
    [{ rollouts: 10, sigma_m: 0.01, seed: 1, terrain: 'bumpy' as never }, 'terrain'],
    [{ rollouts: 10, sigma_m: 0.01, seed: 1, target_height_m: Infinity }, 'target_height_m'],
  ])('terrainRobustness(%j) throws an InputError naming %s', async (options, name) => {
    const error = await terrainRobustness(fixed68, options).catch((e: unknown) => e);
    expect(error).toBeInstanceOf(InputError);
    expect((error as InputError).issues.map((issue) => issue.path)).toContain(name);
  });

  it('finishRobustness refuses rows that do not fit the options (joined from edited files)', async () => {
    const o: RobustnessOptions = { rollouts: 3, sigma_m: 0.01, seed: 1, strides: 5 };
    const rows = await robustnessRows(fixed68, o);
    await expect(finishRobustness(fixed68, o, rows.slice(0, 2))).rejects.toThrow(/3 rollout rows/);
    const edited = rows.map((row) => ({ ...row }));
    edited[1].strides_completed = 9;
    await expect(finishRobustness(fixed68, o, edited)).rejects.toThrow(/rows\[1\]\.strides_completed/);
    edited[1] = { ...rows[1], status: 'flew_away' };
    await expect(finishRobustness(fixed68, o, edited)).rejects.toThrow(/rows\[1\]\.status/);
  });
});

// ---------------------------------------------------------------------------------------------
// The command, in-process with the real engine.

const directory = mkdtempSync(join(tmpdir(), 'pronk-robustness-'));
const file = join(directory, 'seyfarth.json');
writeFileSync(file, JSON.stringify({ name: 'Seyfarth 2002 body', ...JSON.parse(JSON.stringify(fixed68)) }));

describe('pronk robustness', () => {
  it('--json has the contract fields and matches the core analysis', async () => {
    const run = await pronk(['robustness', file, '--rollouts', '60', '--sigma', '0.005', '--seed', '4', '--strides', '8', '--json', '--workers', '2']);
    expect(run.code).toBe(0);
    expect(run.stderr).toBe('');
    const out = JSON.parse(run.stdout);
    for (const key of ['rollouts', 'survived', 'survival', 'wilson95', 'mean_strides_completed', 'failures', 'survival_by_stride', 'caution']) {
      expect(out).toHaveProperty(key);
    }
    const scenarioRead = { ...fixed68, name: 'Seyfarth 2002 body' };
    const core = await terrainRobustness(scenarioRead, { rollouts: 60, sigma_m: 0.005, seed: 4, strides: 8 });
    expect(out).toEqual(JSON.parse(JSON.stringify(described('robustness', core))));
  });

  it('--shard i/n --out writes partial results that join to the one-machine --json', async () => {
    const args = [file, '--rollouts', '50', '--sigma', '0.006', '--seed', '8', '--strides', '6', '--terrain', 'random_heights'];
    const parts: { source: string; partial: PartialResult }[] = [];
    for (const index of [1, 2, 3]) {
      const out = join(directory, `part-${index}.json`);
      const run = await pronk(['robustness', ...args, '--shard', `${index}/3`, '--out', out]);
      expect(run.code).toBe(0);
      parts.push({ source: out, partial: JSON.parse(readFileSync(out, 'utf8')) });
    }
    expect(parts[0].partial.command).toBe('robustness');
    const joined = joinShards(parts);
    const { parseScenario } = await import('../src/core/scenario.js');
    const merged = await finishRobustness(parseScenario(joined.scenario), joined.options as unknown as RobustnessOptions, joined.rows as never);
    const whole = await pronk(['robustness', ...args, '--json']);
    expect(whole.code).toBe(0);
    expect(jsonText('robustness', merged)).toBe(whole.stdout);
  });

  it('the terminal report shows the survival with its interval, the failures and the caution', async () => {
    const run = await pronk(['robustness', file, '--rollouts', '40', '--sigma', '0.008', '--strides', '5']);
    expect(run.code).toBe(0);
    expect(run.stdout).toMatch(/survived +\d+ of 40 = [\d.]+ % \(Wilson 95 %: [\d.]+ % to [\d.]+ %\)/);
    expect(run.stdout).toContain("replaces the scenario's terrain");
    expect(run.stdout).toContain('Caution:');
  });

  it.each<[string[], RegExp]>([
    [['--rollouts', '0', '--sigma', '0.01'], /^pronk robustness: --rollouts: expected a positive integer, found "0"$/],
    [['--rollouts', 'many', '--sigma', '0.01'], /--rollouts: expected a positive integer, found "many"/],
    [['--sigma=-0.01'], /--sigma: expected a standard deviation from 0 to 1000 \(m\), found "-0.01"/],
    [['--sigma', 'abc'], /--sigma: expected a standard deviation from 0 to 1000 \(m\), found "abc"/],
    [['--sigma', '1e308'], /--sigma: expected a standard deviation from 0 to 1000 \(m\), found "1e308"/],
    [['--sigma', 'Infinity'], /--sigma: expected/],
    [[], /--sigma: expected a terrain standard deviation in metres \(required\), found missing/],
    [['--sigma', '0.01', '--seed=-1'], /--seed: expected an integer from 0 to/],
    [['--sigma', '0.01', '--seed', '1.5'], /--seed: expected an integer/],
    [['--sigma', '0.01', '--strides', '0'], /--strides: expected a positive integer, found "0"/],
    [['--sigma', '0.01', '--terrain', 'bumpy'], /--terrain: expected random_walk or random_heights, found "bumpy"/],
    [['--sigma', '0.01', '--target-height', 'x'], /--target-height: expected an apex height from -1e4 to 1e4 \(m\)/],
    [['--sigma', '0.01', '--target-speed', '1e308'], /--target-speed: expected a forward speed from 0 to 1000 \(m\/s\), found "1e308"/],
    [['--sigma', '0.01', '--workers', '0'], /--workers: expected an integer from 1 to 1024/],
    [['--sigma', '0.01', '--shard', '4/3'], /--shard: expected i\/n/],
  ])('robustness FILE %j exits 2 naming the option', async (args, message) => {
    const run = await pronk(['robustness', file, ...args]);
    expect(run.code).toBe(2);
    expect(run.stdout).toBe('');
    expect(run.stderr.trim()).toMatch(message);
    expect(run.stderr.split('\n').filter(Boolean)).toHaveLength(1);
  });
});
