// Replay: the simulator driven by the exported float32 table — read back from the JSON file and
// parsed from the generated C source — reproduces the original policy: Monte Carlo survival on
// random-walk terrain within the original's Wilson 95 % interval (same seed, so the same terrain
// streams), and the step tolerance (largest permanent drop and rise survived) within 1 mm.
// Policies: swing-leg retraction on the human-like body of Seyfarth et al. 2002 (80 kg, 1 m,
// 20 kN/m, g 9.81; 60 deg at apex, 50 deg/s, 5 m/s at 1 m: Seyfarth, Geyer & Herr 2003, J. Exp.
// Biol. 206:2547–2555), and a deadbeat table of attack angle and extension stiffness from
// synthesizeDeadbeat on the same body (Ernst, Geyer & Blickhan 2009; Wu & Geyer 2013).
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { stepTolerance } from '../src/core/analysis/stepdown.js';
import { terrainRobustness } from '../src/core/analysis/robustness.js';
import { buildExport, type ExportOptions, type PolicyExport } from '../src/core/export/build.js';
import { writeC } from '../src/core/export/c99.js';
import { readExportSource } from '../src/core/export/input.js';
import { readPolicyTables, writeJson } from '../src/core/export/json.js';
import { DEG } from '../src/core/export/sample.js';
import { parseScenario, type Scenario } from '../src/core/scenario.js';
import { synthesizeDeadbeat } from '../src/core/synthesis/deadbeat.js';
import { contentHash, PRONK_VERSION } from '../src/core/version.js';
import { closeWorkerPool } from '../src/worker/pool.js';

const dir = mkdtempSync(join(tmpdir(), 'pronk-export-replay-'));
afterAll(() => {
  rmSync(dir, { recursive: true, force: true });
  return closeWorkerPool();
});

const body = { mass_kg: 80, leg_length_m: 1, leg_stiffness_N_per_m: 20000, gravity_m_per_s2: 9.81 };
const start = { apex_height_m: 1, forward_speed_m_per_s: 5 };

interface Float32Back {
  time_since_apex_s: number[];
  attack_rad: number[];
  compression_N_per_m?: number[];
  extension_N_per_m?: number[];
}

// The float32 arrays of a generated C source, by name (`static const float <prefix>_<name>[...] = { ... };`).
function parseCSource(text: string, prefix: string): Float32Back {
  const arrays: Record<string, number[]> = {};
  const pattern = new RegExp(`static const float ${prefix}_(\\w+)\\[[^\\]]*\\] = \\{([^}]*)\\};`, 'g');
  for (const m of text.matchAll(pattern)) {
    arrays[m[1]] = m[2]
      .split(',')
      .map((s) => s.trim())
      .filter(Boolean)
      .map((s) => Math.fround(Number(s.replace(/f$/, ''))));
  }
  return arrays as unknown as Float32Back;
}

// The exported tables as a scenario policy: a time table of the float32 values, back in degrees.
function replayScenario(original: Scenario, back: Float32Back): Scenario {
  const times = back.time_since_apex_s;
  const stiffness =
    back.compression_N_per_m && back.extension_N_per_m
      ? { kind: 'time_table', time_since_apex_s: times, compression_N_per_m: back.compression_N_per_m, extension_N_per_m: back.extension_N_per_m }
      : original.policy.stiffness;
  return parseScenario({ ...original, policy: { angle: { kind: 'time_table', time_since_apex_s: times, attack_deg: back.attack_rad.map((a) => a / DEG) }, stiffness } });
}

async function exportBoth(file: string, prefix: string, options: ExportOptions): Promise<{ e: PolicyExport; fromJson: Float32Back; fromC: Float32Back }> {
  const e = buildExport(await readExportSource(file), options);
  const jsonPath = join(dir, `${prefix}.json`);
  writeFileSync(jsonPath, writeJson(e));
  const c = writeC(e, prefix, `${prefix}.h`);
  writeFileSync(join(dir, c.sourceName), c.source);
  const fromJson = readPolicyTables(readFileSync(jsonPath, 'utf8')).float32 as unknown as Float32Back;
  const fromC = parseCSource(readFileSync(join(dir, c.sourceName), 'utf8'), prefix);
  return { e, fromJson, fromC };
}

async function compare(original: Scenario, replay: Scenario, sigma: number) {
  const options = { rollouts: 1000, sigma_m: sigma, seed: 20030601 };
  const [mcOriginal, mcReplay] = [await terrainRobustness(original, options), await terrainRobustness(replay, options)];
  const [stepOriginal, stepReplay] = [await stepTolerance(original), await stepTolerance(replay)];
  return { mcOriginal, mcReplay, stepOriginal, stepReplay };
}

function expectReplayMatches(r: Awaited<ReturnType<typeof compare>>) {
  // the comparison must mean something: some rollouts fail, some survive
  expect(r.mcOriginal.survived).toBeGreaterThan(0);
  expect(r.mcOriginal.survived).toBeLessThan(r.mcOriginal.rollouts);
  const [lo, hi] = r.mcOriginal.wilson95; // Wilson 1927 score interval (src/core/stats.ts)
  expect(r.mcReplay.survival).toBeGreaterThanOrEqual(lo);
  expect(r.mcReplay.survival).toBeLessThanOrEqual(hi);
  expect(Math.abs(r.stepReplay.max_step_down_m - r.stepOriginal.max_step_down_m)).toBeLessThanOrEqual(0.001 + 1e-12);
  expect(Math.abs(r.stepReplay.max_step_up_m - r.stepOriginal.max_step_up_m)).toBeLessThanOrEqual(0.001 + 1e-12);
}

function expectSameTables(e: PolicyExport, a: Float32Back, b: Float32Back) {
  expect(a.time_since_apex_s).toEqual(Array.from(e.float32.axis));
  expect(a.attack_rad).toEqual(Array.from(e.float32.tables[0]));
  expect(b).toEqual(a); // the C source holds exactly the JSON's float32 values
}

describe('replay of exported tables', () => {
  it('swing-leg retraction (Seyfarth et al. 2003): same survival within its Wilson interval, step tolerance within 1 mm', async () => {
    const original = parseScenario({
      name: 'Seyfarth 2003 retraction',
      body,
      start,
      policy: { angle: { kind: 'retraction', attack_at_apex_deg: 60, rate_deg_per_s: 50 }, stiffness: { kind: 'constant' } },
      strides: 20,
    });
    const file = join(dir, 'retraction-scenario.json');
    writeFileSync(file, JSON.stringify(original));
    const { e, fromJson, fromC } = await exportBoth(file, 'retraction', { grid: { by: 'points', points: 32 } });
    expectSameTables(e, fromJson, fromC);
    // law (ballistic fall): the latest touchdown onto ground 1 m down solves 1 - g t^2/2 = -1 + sin(60 + 50 t deg)
    const t = e.grid.t_max_s;
    expect(1 - 0.5 * 9.81 * t * t).toBeCloseTo(-1 + Math.sin((60 + 50 * t) * DEG), 12);
    const r = await compare(original, replayScenario(original, fromC), 0.06);
    expectReplayMatches(r);
  });

  it('deadbeat attack and extension-stiffness table (synthesizeDeadbeat, in a result file): the same', async () => {
    const scenario = parseScenario({ name: 'Seyfarth 2002 body', body, start, policy: { angle: { kind: 'fixed', attack_deg: 68 } }, strides: 20 });
    const table = await synthesizeDeadbeat(scenario, { groundRange_m: [-0.2, 0.05], knots: 9, mode: 'angle_and_stiffness' });
    expect(table.unsolved).toEqual([]);
    const withTable = parseScenario({ ...scenario, policy: table.policy });
    const result = {
      format: 'pronk-result',
      format_version: 1,
      kind: 'deadbeat',
      scenario: withTable,
      policy: table.policy,
      provenance: { pronk_version: PRONK_VERSION, scenario_sha256: await contentHash(withTable), date: '2026-01-02T03:04:05.000Z' },
    };
    const file = join(dir, 'deadbeat-result.json');
    writeFileSync(file, JSON.stringify(result));
    const { e, fromJson, fromC } = await exportBoth(file, 'deadbeat', {});
    expectSameTables(e, fromJson, fromC);
    expect(e.source.provenance.scenario_sha256_matches).toBe(true);
    expect(fromC.extension_N_per_m).toEqual(Array.from(e.float32.tables[2]));
    // the default grid holds every knot of the table: its float64 values are the knots' own
    const knots = table.policy.angle.time_since_apex_s;
    const axis = e.grid.axes[0].points;
    for (const [i, tk] of knots.entries()) expect(e.grid.values[0][axis.indexOf(tk)]).toBe(table.policy.angle.attack_deg[i]);
    const r = await compare(withTable, replayScenario(withTable, fromJson), 0.05);
    expectReplayMatches(r);
  });
});
