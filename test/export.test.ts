// The export's pieces: the float32 reference lookup and the CRC, the grid (t_max, breakpoints,
// the interpolation error against closed forms, the --max-error search), the JSON and CSV
// round trips, the refusals (NaN, float32 overflow, negative constraint margins) and --force,
// result-file validation, the C prefix, and the command line through the built CLI.
import { spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { crc32 as zlibCrc32 } from 'node:zlib';
import { afterAll, describe, expect, it } from 'vitest';
import { buildExport } from '../src/core/export/build.js';
import { cFloat, checkPrefix, defaultPrefix, writeC } from '../src/core/export/c99.js';
import { readCsv, writeCsv } from '../src/core/export/csv.js';
import { parseResult, scenarioSource, type ExportSource } from '../src/core/export/input.js';
import { readPolicyTables, writeJson } from '../src/core/export/json.js';
import { crc32, crc32Float32, float32Bytes, lookupFloat32, nextFloat32 } from '../src/core/export/lookup.js';
import { DEG, chooseGrid, checkTimes, float64Error, latestTouchdownS, tableSpecs, timeAxis } from '../src/core/export/sample.js';
import { InputError, formatIssues } from '../src/core/errors.js';
import { parseScenario } from '../src/core/scenario.js';
import { contentHash, PRONK_VERSION } from '../src/core/version.js';

// Body of Seyfarth et al. 2002: 80 kg, 1 m, 20 kN/m, g 9.81; start apex 1 m at 5 m/s.
const body = { mass_kg: 80, leg_length_m: 1, leg_stiffness_N_per_m: 20000, gravity_m_per_s2: 9.81 };
const start = { apex_height_m: 1, forward_speed_m_per_s: 5 };
const scenarioWith = (policy: object, extra: object = {}) => ({ name: 'export test', body, start, policy, strides: 10, ...extra });
const clampedRetraction = { angle: { kind: 'retraction', attack_at_apex_deg: 60, rate_deg_per_s: 50, max_deg: 80 }, stiffness: { kind: 'constant' } };
const tables = {
  angle: { kind: 'time_table', time_since_apex_s: [0.05, 0.1, 0.15, 0.2], attack_deg: [70, 68, 66.5, 65.25] },
  stiffness: { kind: 'time_table', time_since_apex_s: [0.06, 0.12, 0.3], compression_N_per_m: [20000, 21000, 22500], extension_N_per_m: [24000, 21000.5, 18000.25] },
};
const source = (value: object) => scenarioSource(value, 'test.json');

function messages(f: () => unknown): string[] {
  try {
    f();
  } catch (error) {
    if (error instanceof InputError) return error.issues.map((i) => i.message ?? `${i.path}: expected ${i.expected}, found ${i.found}`);
    throw error;
  }
  throw new Error('expected an InputError');
}

describe('float32 reference lookup and checksum', () => {
  it('interpolates linearly, holds and flags outside the grid, and gives the apex value for NaN', () => {
    const table = { axis: Float32Array.of(0, 1, 2), values: Float32Array.of(0, 10, 30) };
    // closed form: linear interpolation between (0, 0), (1, 10), (2, 30)
    expect(lookupFloat32(table, 0.5)).toEqual({ value: 5, inRange: true });
    expect(lookupFloat32(table, 1.5)).toEqual({ value: 20, inRange: true });
    expect(lookupFloat32(table, 1)).toEqual({ value: 10, inRange: true });
    expect(lookupFloat32(table, 0)).toEqual({ value: 0, inRange: true });
    expect(lookupFloat32(table, 2)).toEqual({ value: 30, inRange: true });
    expect(lookupFloat32(table, -0.25)).toEqual({ value: 0, inRange: false });
    expect(lookupFloat32(table, 2.5)).toEqual({ value: 30, inRange: false });
    expect(lookupFloat32(table, NaN)).toEqual({ value: 0, inRange: false });
    // each step rounds to float32: a third is not representable, the float32 result is
    expect(lookupFloat32({ axis: Float32Array.of(0, 3), values: Float32Array.of(0, 1) }, 1).value).toBe(Math.fround(1 / 3));
  });

  it('CRC-32 is the zlib CRC: check value 0xCBF43926 for "123456789" (CRC catalogue, CRC-32/ISO-HDLC)', () => {
    expect(crc32(new TextEncoder().encode('123456789'))).toBe(0xcbf43926);
    const values = Float32Array.of(0, 1.0471975803375244, 20000, -0.5, 1e-40);
    expect(crc32Float32([values])).toBe(zlibCrc32(float32Bytes(values))); // library: node:zlib
    expect(Array.from(float32Bytes(Float32Array.of(1)))).toEqual([0x00, 0x00, 0x80, 0x3f]); // IEEE 754: 1.0f = 0x3f800000, little-endian
  });

  it('C float constants read back to the same float32 (9 significant digits)', () => {
    let seed = 99;
    for (let i = 0; i < 2000; i++) {
      seed = (Math.imul(seed, 1664525) + 1013904223) >>> 0;
      const v = new Float32Array(new Uint32Array([seed & 0x7f7fffff]).buffer)[0]; // finite floats of every exponent
      expect(Math.fround(Number(cFloat(v).replace(/f$/, '')))).toBe(v);
    }
  });
});

describe('the grid', () => {
  it('t_max of a fixed angle is the fall onto ground one leg length down (law: free fall from the apex)', async () => {
    const s = parseScenario(scenarioWith({ angle: { kind: 'fixed', attack_deg: 68 } }));
    expect(latestTouchdownS(s, s.policy.angle)).toBeCloseTo(Math.sqrt((2 * (1 + 1 - Math.sin(68 * DEG))) / 9.81), 13);
    const e = buildExport(await source(scenarioWith({ angle: { kind: 'fixed', attack_deg: 68 } })));
    expect(e.grid.axes[0].points).toEqual([0, e.grid.t_max_s]);
    expect(e.grid.values[0]).toEqual([68, 68]);
  });

  it("with the policy's breakpoints the table of a clamped retraction is exact", async () => {
    const e = buildExport(await source(scenarioWith(clampedRetraction)), { grid: { by: 'points', points: 7 } });
    const axis = e.grid.axes[0].points;
    // law of the contract: the clamp at 80 deg begins at (80 - 60) / 50 = 0.4 s
    expect(axis).toContain(0.4);
    expect(axis.length).toBe(8);
    expect(e.tables[0].float64_error.max_abs).toBeLessThan(1e-12);
    // float32 rounding of angle (about 1e-7 rad) and time: a few 1e-6 deg
    expect(e.tables[0].float32_error.max_abs).toBeLessThan(2e-5);
  });

  it('an evenly spaced grid misses the kink by w h s (1 - s) (law: linear interpolation of a kinked line)', async () => {
    const src = await source(scenarioWith(clampedRetraction));
    const e = buildExport(src, { grid: { by: 'points', points: 11 }, mode: 'uniform' });
    const axis = e.grid.axes[0].points;
    const h = e.grid.t_max_s / 10;
    const i = axis.findIndex((t, k) => t <= 0.4 && axis[k + 1] > 0.4);
    const s = (0.4 - axis[i]) / h;
    expect(e.tables[0].float64_error.max_abs).toBeCloseTo(50 * h * s * (1 - s), 10);
    expect(e.tables[0].float64_error.at_time_since_apex_s).toBeCloseTo(0.4, 12);
  });

  it('--max-error finds a count that passes while one fewer fails', async () => {
    const src = await source(scenarioWith(clampedRetraction));
    const bound = 0.01;
    const e = buildExport(src, { grid: { by: 'max_error', max_error_deg: bound, max_error_N_per_m: 1 }, mode: 'uniform' });
    const n = e.grid.even_points;
    expect(e.tables[0].float64_error.max_abs).toBeLessThanOrEqual(bound);
    const specs = tableSpecs(src.scenario, src.policy);
    const fewer = timeAxis([], e.grid.t_max_s, n - 1, 'uniform');
    const values = fewer.points.map((t) => specs[0].evaluate([t]));
    expect(float64Error(specs[0], fewer, values, checkTimes(fewer, [0.4])).max_abs).toBeGreaterThan(bound);
    // a kink's worst case is w h / 4 (s = 1/2): at most that many points are needed
    expect(n - 1).toBeLessThanOrEqual(Math.ceil((50 * e.grid.t_max_s) / (4 * bound)));
    // with the breakpoints in the grid, two points are already exact
    expect(buildExport(src, { grid: { by: 'max_error', max_error_deg: bound, max_error_N_per_m: 1 } }).grid.even_points).toBe(2);
  });

  it('a time table keeps its knots exactly, and t_max covers the later stiffness table', async () => {
    const e = buildExport(await source(scenarioWith(tables)), { grid: { by: 'points', points: 5 } });
    const axis = e.grid.axes[0].points;
    expect(e.grid.t_max_s).toBe(0.3);
    expect(e.grid.t_max_source).toMatch(/stiffness table/);
    for (const [k, t] of tables.angle.time_since_apex_s.entries()) expect(e.grid.values[0][axis.indexOf(t)]).toBe(tables.angle.attack_deg[k]);
    for (const [k, t] of tables.stiffness.time_since_apex_s.entries()) {
      expect(e.grid.values[1][axis.indexOf(t)]).toBe(tables.stiffness.compression_N_per_m[k]);
      expect(e.grid.values[2][axis.indexOf(t)]).toBe(tables.stiffness.extension_N_per_m[k]);
    }
    // held flat before the first knot, as the kernel holds a table (assembly/policy.ts)
    expect(e.grid.values[0][0]).toBe(70);
    for (const t of e.tables) expect(t.float64_error.max_abs).toBeLessThan(1e-9);
    expect(e.specs.map((s) => s.column)).toEqual(['attack_deg', 'compression_N_per_m', 'extension_N_per_m']);
  });

  it('--max-error that no grid of 65536 points meets is an error naming the option', async () => {
    const src = await source(scenarioWith(clampedRetraction));
    const specs = tableSpecs(src.scenario, src.policy);
    // a bound below float64 rounding: no grid of a kinked schedule meets it (an even grid can
    // land on the kink, so a small but representable bound might be met by luck)
    const range = { t_max_s: 0.45, source: 'test' };
    expect(() =>
      chooseGrid(specs, src.policy, range, 'uniform', { by: 'max_error', max_error_deg: 1e-300, max_error_N_per_m: 1 }, { points: '--points', max_error: '--max-error', max_stiffness_error: '--max-stiffness-error' }),
    ).toThrow(/--max-error: expected a bound that a grid of at most 65536 points meets/);
  });
});

describe('JSON and CSV', () => {
  it('round-trip to the same numbers (float64 and float32), and carry the caution and provenance', async () => {
    const e = buildExport(await source(scenarioWith(tables)), { grid: { by: 'points', points: 9 } });
    const json = writeJson(e);
    const doc = JSON.parse(json);
    expect(doc.format).toBe('pronk-policy');
    expect(doc.format_version).toBe(1);
    expect(doc.caution).toContain('tethered');
    expect(doc.provenance.result_sha256).toBe(await contentHash(scenarioWith(tables)));
    expect(doc.provenance.pronk_version).toBe(PRONK_VERSION);
    const back = readPolicyTables(json);
    expect(back.float64.time_since_apex_s).toEqual(e.grid.axes[0].points);
    expect(back.float64.attack_deg).toEqual(e.grid.values[0]);
    expect(back.float64.extension_N_per_m).toEqual(e.grid.values[2]);
    expect(back.float32.attack_rad).toEqual(Array.from(e.float32.tables[0]));
    const csv = writeCsv(e);
    expect(csv.split('\n').find((l) => !l.startsWith('#'))).toBe('time_since_apex_s,attack_deg,compression_N_per_m,extension_N_per_m');
    expect(csv).toMatch(/^# CAUTION: Simulation results are not a guarantee/m);
    const columns = readCsv(csv);
    for (const [name, values] of Object.entries(back.float64)) {
      expect(columns[name].length).toBe(values.length);
      columns[name].forEach((v, i) => expect(Object.is(v, values[i])).toBe(true)); // bit for bit
    }
  });
});

describe('refusals and --force', () => {
  // Every exported number is checked once rounded to float32 (IEEE 754 binary32: largest finite
  // about 3.4028235e38, smallest normal 2^-126 = 1.17549435e-38); a number firmware must not run is
  // refused even with --force. The scenario validator's own bounds refuse most such numbers in a
  // file, so several cases alter the policy after validation: the exporter's check is the last
  // guard in front of firmware, whatever reaches it.
  const FORCE_NEVER = 'nothing written: firmware must not run these numbers (--force does not write them)';

  it('refuses a NaN table point, naming it, even with --force', async () => {
    const src = await source(scenarioWith(tables));
    const broken: ExportSource = JSON.parse(JSON.stringify(src));
    (broken.policy.angle as { attack_deg: number[] }).attack_deg[2] = NaN; // by hand: no file can hold NaN
    broken.scenario.policy = broken.policy;
    // grid: 0, then the knots 0.05, 0.06, 0.1, 0.12, 0.15, 0.2 of both tables, then 0.3 (the end).
    // The NaN knot at 0.15 s is point 5; the cells that reach it hold NaN too (0 x NaN is NaN,
    // as in the kernel's interpolation)
    const expected = [
      'attack table point 3 (t = 0.1 s): expected an angle in (0, 90] deg that float32 holds as a normal number, found NaN',
      'attack table point 4 (t = 0.12 s): expected an angle in (0, 90] deg that float32 holds as a normal number, found NaN',
      'attack table point 5 (t = 0.15 s): expected an angle in (0, 90] deg that float32 holds as a normal number, found NaN',
      FORCE_NEVER,
    ];
    expect(messages(() => buildExport(broken, { grid: { by: 'points', points: 2 } }))).toEqual(expected);
    expect(messages(() => buildExport(broken, { grid: { by: 'points', points: 2 }, force: true }))).toEqual(expected);
  });

  it('refuses a stiffness beyond the float32 range (Infinity once rounded), in a table or as a macro', async () => {
    const huge = { ...tables, stiffness: { ...tables.stiffness, compression_N_per_m: [1e39, 21000, 22500] } };
    expect(messages(() => parseScenario(scenarioWith(huge)))).toEqual([
      'policy.stiffness.compression_N_per_m[0]: expected a stiffness from 1e-3 to 1e12 (N/m), found 1e+39',
    ]);
    const src = await source(scenarioWith(tables));
    (src.policy.stiffness as { compression_N_per_m: number[] }).compression_N_per_m = [1e39, 21000, 22500];
    const problems = messages(() => buildExport(src, { force: true }));
    expect(problems[0]).toBe(
      'compression table point 0 (t = 0 s): expected a number > 0 that float32 holds (finite; at least 1.17549e-38 in magnitude), ' +
        'found 1e+39 N/m, which is Infinity in float32 (beyond the float32 range, about 3.4e38)',
    );
    expect(problems[problems.length - 1]).toBe(FORCE_NEVER);
    // the body's stiffness of 1e39 N/m once exported as `#define ..._N_PER_M (1e30f * 1e30f)` (inf)
    const macro = await source(scenarioWith(clampedRetraction));
    macro.scenario.body.leg_stiffness_N_per_m = 1e39;
    expect(messages(() => buildExport(macro, { force: true }))[0]).toBe(
      'body.leg_stiffness_N_per_m (the C macro ..._BODY_LEG_STIFFNESS_N_PER_M): expected a number > 0 that float32 holds ' +
        '(finite; at least 1.17549e-38 in magnitude), found 1e+39 N/m, which is Infinity in float32 (beyond the float32 range, about 3.4e38)',
    );
    // and no writer can be handed one: a non-finite number there is a bug, never a C expression
    expect(() => cFloat(Infinity)).toThrow(/non-finite/);
    expect(() => cFloat(NaN)).toThrow(/non-finite/);
  });

  it('refuses a table knot at 1e39 s (an infinite T_MAX_S, "Infinity" in the JSON), even with --force', async () => {
    const far = { angle: { kind: 'time_table', time_since_apex_s: [0.1, 1e39], attack_deg: [70, 65] }, stiffness: { kind: 'constant' } };
    expect(messages(() => parseScenario(scenarioWith(far)))).toEqual([
      'policy.angle.time_since_apex_s[1]: expected a time from 0 to 1e6 (s), found 1e+39',
    ]);
    const src = await source(scenarioWith(tables));
    src.policy = JSON.parse(JSON.stringify(far));
    src.scenario.policy = src.policy;
    const problems = messages(() => buildExport(src, { force: true }));
    expect(problems).toContain(
      'grid time point 2 (t_max, the C macro ..._T_MAX_S): expected a number > 0 that float32 holds (finite; at least 1.17549e-38 in magnitude), ' +
        'found 1e+39 s, which is Infinity in float32 (beyond the float32 range, about 3.4e38)',
    );
    expect(problems[problems.length - 1]).toBe(FORCE_NEVER);
  });

  it('refuses a compression stiffness of 1e-46 N/m (once exported as 0) and a subnormal one', async () => {
    for (const [value, found] of [
      [1e-46, '1e-46 N/m, which float32 flushes to 0'],
      [1e-40, '1e-40 N/m, a subnormal float32 (many FPUs flush it to 0)'],
    ] as const) {
      const src = await source(scenarioWith({ angle: { kind: 'fixed', attack_deg: 68 }, stiffness: { kind: 'split', compression_N_per_m: 20000, extension_N_per_m: 21000 } }));
      (src.policy.stiffness as { compression_N_per_m: number }).compression_N_per_m = value;
      expect(messages(() => buildExport(src, { force: true }))).toEqual([
        `policy.stiffness.compression_N_per_m (the C macro ..._COMPRESSION_N_PER_M): expected a number > 0 that float32 holds (finite; at least 1.17549e-38 in magnitude), found ${found}`,
        FORCE_NEVER,
      ]);
    }
  });

  it('refuses numbers a valid scenario file can hold that float32 flushes: an attack of 1e-300 deg, a knot at 1e-40 s, an apex at 1e-40 m', async () => {
    // each passes the validator (angles > 0, times >= 0, heights from -1e4 to 1e4 m)
    const angle = await source(scenarioWith({ angle: { kind: 'fixed', attack_deg: 1e-300 } }));
    expect(messages(() => buildExport(angle))[0]).toBe(
      'attack table point 0 (t = 0 s): expected an angle in (0, 90] deg that float32 holds as a normal number, found 1e-300 deg, which float32 flushes to 0 rad',
    );
    const knot = await source(scenarioWith({ angle: { kind: 'time_table', time_since_apex_s: [1e-40, 0.2], attack_deg: [70, 65] } }));
    expect(messages(() => buildExport(knot))[0]).toBe(
      'grid time point 1: expected a number > 0 that float32 holds (finite; at least 1.17549e-38 in magnitude), found 1e-40 s, a subnormal float32 (many FPUs flush it to 0)',
    );
    const low = await source({ ...scenarioWith({ angle: { kind: 'fixed', attack_deg: 68 } }), start: { apex_height_m: 1e-40, forward_speed_m_per_s: 5 }, terrain: { kind: 'steps', ground_heights_m: [-1] } });
    expect(messages(() => buildExport(low))[0]).toBe(
      'start.apex_height_m (the C macro ..._START_APEX_HEIGHT_M): expected a number that float32 holds (finite; 0 or at least 1.17549e-38 in magnitude), found 1e-40 m, a subnormal float32 (many FPUs flush it to 0)',
    );
  });

  it('refuses a retraction without a clamp tabulated past (0, 90] deg, and says how far it may go', async () => {
    // --t-max 60 on 64 deg + 40 deg/s: 64 + 40 x 60 = 2464 deg; -40 deg/s: 64 - 2400 = -2336 deg (closed form)
    for (const [rate, end, leaves] of [
      [40, '2464 deg', '0.65'], // (90 - 64) / 40 s
      [-40, '-2336 deg', '1.6'], // (0 - 64) / -40 s
    ] as const) {
      const src = await source(scenarioWith({ angle: { kind: 'retraction', attack_at_apex_deg: 64, rate_deg_per_s: rate }, stiffness: { kind: 'constant' } }));
      const problems = messages(() => buildExport(src, { t_max_s: 60, force: true, names: { points: '--points', max_error: '--max-error', max_stiffness_error: '--max-stiffness-error', t_max: '--t-max' } }));
      expect(problems[0]).toBe(`attack table point 1 (t = 60 s): expected an angle in (0, 90] deg that float32 holds as a normal number, found ${end}`);
      expect(problems).toContain(
        `the retraction has no ${rate > 0 ? 'max_deg' : 'min_deg'} and reaches ${rate > 0 ? 90 : 0} deg at t = ${leaves} s, past which it leaves the attack range (0, 90] deg: set --t-max ${rate > 0 ? 'to at most that' : 'below that'}, or give the retraction a ${rate > 0 ? 'max_deg' : 'min_deg'}`,
      );
      expect(problems[problems.length - 1]).toBe(FORCE_NEVER);
    }
    // by default the table of a rising one ends where it reaches 90 deg, never above
    const risingPolicy = { angle: { kind: 'retraction', attack_at_apex_deg: 64, rate_deg_per_s: 90 }, stiffness: { kind: 'constant' } };
    const rising = buildExport(await source(scenarioWith(risingPolicy, { body: { ...body, leg_length_m: 0.5 } })));
    expect(rising.grid.t_max_source).toBe('where the retraction leaves the attack range (0, 90] deg');
    const attack = rising.grid.values[0];
    expect(Math.max(...attack)).toBeLessThanOrEqual(90);
  });

  it('refuses a result whose constraint margin is negative unless --force; a result without constraints is fine', async () => {
    const scenario = parseScenario(scenarioWith(clampedRetraction));
    const result = {
      format: 'pronk-result',
      format_version: 1,
      kind: 'optimization',
      scenario,
      policy: scenario.policy,
      constraints: [
        { name: 'peak_leg_force_N', value: 2612.5, limit: 2400, margin: -212.5, kind: 'upper' },
        { name: 'max_compression_m', value: 0.1, limit: 0.2, margin: 0.1 },
      ],
      provenance: { pronk_version: '0.0.9', scenario_sha256: await contentHash(scenario), date: '2026-01-01T00:00:00Z' },
    };
    const src = await parseResult(result, 'result.json');
    expect(messages(() => buildExport(src))).toContain('constraint "peak_leg_force_N" is violated: value 2612.5, limit 2400, margin -212.5 (a negative margin)');
    expect(buildExport(src, { force: true }).forced).toBe(true);
    const clean = await parseResult({ ...result, constraints: undefined }, 'result.json');
    expect(clean.constraints).toBeNull();
    expect(buildExport(clean).forced).toBe(false);
    expect(clean.provenance.scenario_sha256_matches).toBe(true);
  });

  it('reads a result whose constraint was not measured (value and margin null, as optimize writes them) and refuses to export it, even with --force', async () => {
    const scenario = parseScenario(scenarioWith(clampedRetraction));
    const result = {
      format: 'pronk-result',
      format_version: 1,
      kind: 'optimization',
      scenario,
      policy: scenario.policy,
      // objectives.ts: a constraint measured on rollouts whose held-out strides all failed has
      // value, margin and margin_percent null
      constraints: [
        { name: 'max_compression_m', value: 0.1, limit: 0.2, margin: 0.1 },
        { name: 'peak_leg_force_N', value: null, limit: 2400, margin: null, margin_percent: null },
      ],
      provenance: { pronk_version: '0.0.9', scenario_sha256: await contentHash(scenario), date: '2026-01-01T00:00:00Z' },
    };
    const src = await parseResult(result, 'result.json');
    expect(src.constraints?.[1].value).toBeNull();
    let refusal: InputError | undefined;
    try {
      buildExport(src);
    } catch (error) {
      refusal = error as InputError;
    }
    expect(refusal).toBeInstanceOf(InputError);
    const text = formatIssues(refusal!.issues, refusal!.source);
    expect(text).toContain('result.json: constraints[1]: constraint "peak_leg_force_N" was not measured (value null): no held-out stride completed');
    expect(text).toContain('a policy that never completes a stride is not exported (--force does not write it)');
    expect(messages(() => buildExport(src, { force: true })).join('\n')).toContain('"peak_leg_force_N" was not measured');
    // value and margin go together: one without the other is a malformed file
    await expect(parseResult({ ...result, constraints: [{ name: 'x', value: null, limit: 1, margin: 0.5 }] }, 'result.json')).rejects.toThrow(
      /constraints\[0\]\.margin: expected null exactly when value is null/,
    );
  });
});

describe('result files', () => {
  const base = async () => {
    const scenario = parseScenario(scenarioWith(clampedRetraction));
    return {
      format: 'pronk-result',
      format_version: 1,
      kind: 'deadbeat',
      scenario,
      policy: scenario.policy,
      provenance: { pronk_version: '0.1.0', scenario_sha256: await contentHash(scenario), date: '2026-01-01T00:00:00Z' },
    } as Record<string, any>;
  };
  const problemsOf = async (value: unknown) => {
    try {
      await parseResult(value, 'r.json');
    } catch (error) {
      if (error instanceof InputError) return error.format();
      throw error;
    }
    throw new Error('expected an InputError');
  };

  it('name the bad field, what was expected and what was found', async () => {
    const good = await base();
    expect(await problemsOf({ ...good, format_version: 2 })).toBe('r.json: format_version: expected 1, found 2');
    expect(await problemsOf({ ...good, kind: 'basin' })).toBe('r.json: kind: expected one of optimization, deadbeat, found "basin"');
    expect(await problemsOf({ ...good, format: 'pronk-partial' })).toMatch(/^r\.json: format: expected "pronk-result" \(a result file; a scenario file has no format field\), found "pronk-partial"$/);
    expect(await problemsOf({ ...good, constraints: [{ name: 'x', value: 1, limit: 2, margin: 'big' }] })).toBe(
      'r.json: constraints[0].margin: expected a finite number (>= 0 when the constraint holds), or null when nothing was measured, found "big"',
    );
    expect(await problemsOf({ ...good, provenance: { ...good.provenance, scenario_sha256: 'abc' } })).toBe(
      'r.json: provenance.scenario_sha256: expected a SHA-256 in hex (64 characters), found "abc"',
    );
    const { provenance: _, ...noProvenance } = good;
    expect(await problemsOf(noProvenance)).toBe('r.json: provenance: expected an object with pronk_version, scenario_sha256, date, found missing');
    expect(await problemsOf({ ...good, scenario: { ...good.scenario, body: { ...good.scenario.body, mass_kg: -1 } } })).toBe(
      'r.json: scenario.body.mass_kg: expected a number from 1e-6 to 1e6 (kg), found -1',
    );
    expect(await problemsOf({ ...good, policy: { angle: { kind: 'fixed', attack_deg: 95 } } })).toBe(
      'r.json: policy.angle.attack_deg: expected an angle in (0, 90] (deg from the horizontal), found 95',
    );
  });

  it('export the top-level policy with the scenario\'s body; an edited scenario is noticed', async () => {
    const good = await base();
    const table = { angle: { kind: 'time_table', time_since_apex_s: [0.1, 0.2], attack_deg: [68, 66] }, stiffness: { kind: 'constant' } };
    const src = await parseResult({ ...good, policy: table }, 'r.json');
    expect(src.policy.angle.kind).toBe('time_table');
    expect(src.scenario.body.mass_kg).toBe(80);
    expect(src.provenance.source_pronk_version).toBe('0.1.0');
    const edited = await parseResult({ ...good, scenario: { ...good.scenario, strides: 11 } }, 'r.json');
    expect(edited.provenance.scenario_sha256_matches).toBe(false);
  });
});

describe('C prefix', () => {
  it('is a lowercase C identifier; the default comes from the scenario name', () => {
    for (const bad of ['9lives', 'Upper', 'int', 'a-b', 'trailing_', '', 'x'.repeat(33)]) {
      expect(() => checkPrefix(bad, '--prefix'), bad).toThrow(/--prefix: expected a lowercase C identifier/);
    }
    expect(checkPrefix('alpha_2')).toBe('alpha_2');
    expect(defaultPrefix('Tamarack-9 monopod on the Halloran yard test lane')).toBe('tamarack_9_monopod_on_the');
    expect(defaultPrefix('2 legs')).toBe('p_2_legs');
    expect(defaultPrefix(undefined)).toBe('pronk_policy');
    expect(defaultPrefix('Static')).toBe('static_policy');
  });
});

// ---------------------------------------------------------------------------------------------
// The command line, through the built CLI.

const repo = join(dirname(fileURLToPath(import.meta.url)), '..');
const built = existsSync(join(repo, 'dist', 'src', 'cli', 'main.js'));
const dir = mkdtempSync(join(tmpdir(), 'pronk-export-cli-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

function pronk(...args: string[]) {
  const r = spawnSync(process.execPath, [join(repo, 'bin', 'pronk.js'), ...args], { encoding: 'utf8', cwd: dir, env: { ...process.env, PRONK_DEBUG: '' } });
  return { code: r.status, stdout: r.stdout, stderr: r.stderr };
}

describe.skipIf(!built)('pronk export (built CLI)', () => {
  const scenarioFile = join(dir, 'retraction.json');
  writeFileSync(scenarioFile, JSON.stringify(scenarioWith(clampedRetraction, { name: 'Clamped retraction' })));

  it('--help describes the command and its options', () => {
    const r = pronk('export', '--help');
    expect(r.code).toBe(0);
    expect(r.stdout).toMatch(/Usage: pronk export RESULT\|SCENARIO --format c\|json\|csv --out PATH/);
    for (const option of ['--points', '--max-error', '--max-stiffness-error', '--uniform', '--t-max', '--prefix', '--force', '--json']) expect(r.stdout).toContain(option);
  });

  it('bad options exit 2 with one line naming the option', () => {
    const cases: [string[], RegExp][] = [
      [['--format', 'c', '--out', 'x.h', '--points', '0'], /--points: expected an integer from 2 to 65536, found "0"/],
      [['--format', 'json', '--out', 'x.json', '--points', '5', '--max-error', '0.1'], /--points: expected either --points or --max-error, not both, found --points 5 and --max-error 0.1/],
      [['--format', 'xml', '--out', 'x.xml'], /--format: expected one of c, json, csv, found "xml"/],
      [['--format', 'c', '--out', 'x.h', '--prefix', '9bad'], /--prefix: expected a lowercase C identifier/],
      [['--format', 'c', '--out', 'x.txt'], /--out: expected a header file name ending in \.h/],
      [['--format', 'json'], /--out: expected the file to write \(required\), found missing/],
      [['--format', 'json', '--out', 'x.json', '--uniform'], /--uniform: expected to come with --points N or --max-error E/],
      [['--format', 'json', '--out', 'x.json', '--max-error=-1'], /--max-error: expected a bound > 0/],
      [['--format', 'json', '--out', 'x.json', '--t-max', '0'], /--t-max: expected a time from 0.0001 to 60 s, found "0"/],
      [['--format', 'json', '--out', scenarioFile], /--out: cannot write .* \(it is the input file .*, which this command reads\): writing there would replace an input; name another file/],
    ];
    for (const [args, pattern] of cases) {
      const r = pronk('export', scenarioFile, ...args);
      expect(r.code, args.join(' ')).toBe(2);
      expect(r.stderr, args.join(' ')).toMatch(pattern);
      expect(r.stderr.trim().split('\n').length, args.join(' ')).toBe(1);
      expect(r.stdout).toBe('');
    }
  });

  it('writes JSON and reports what it wrote with --json; C writes the header and the source', () => {
    const r = pronk('export', scenarioFile, '--format', 'json', '--out', 'p.json', '--points', '12', '--json');
    expect(r.code).toBe(0);
    const report = JSON.parse(r.stdout);
    expect(report).toMatchObject({ format: 'pronk-export', format_version: 1, model: 'slip', file_format: 'json' });
    expect(report.written[0].path).toBe('p.json');
    expect(report.grid.points).toBe(13); // 12 evenly spaced + the clamp at 0.4 s
    expect(report.tables[0].interpolation_error.float64_max_abs).toBeLessThan(1e-12);
    expect(report.checksum_crc32).toMatch(/^0x[0-9a-f]{8}$/);
    expect(report.caution).toContain('tethered');
    const doc = JSON.parse(readFileSync(join(dir, 'p.json'), 'utf8'));
    expect(report.checksum_crc32).toBe(doc.float32_crc32);
    const c = pronk('export', scenarioFile, '--format', 'c', '--out', 'clamped.h');
    expect(c.code).toBe(0);
    expect(c.stdout).toContain('prefix    clamped_retraction');
    expect(c.stdout).toContain('Caution:');
    expect(readFileSync(join(dir, 'clamped.c'), 'utf8')).toContain('#include "clamped.h"');
    expect(readFileSync(join(dir, 'clamped.h'), 'utf8')).toContain('bool clamped_retraction_attack_lookup(float t_since_apex_s, float *attack_rad_out);');
  });

  it('an unclamped retraction with --t-max 60 (angles 2464 and -2336 deg) exits 2 naming the table point, even with --force', () => {
    for (const rate of [40, -40]) {
      const name = `unclamped${rate}.json`;
      writeFileSync(join(dir, name), JSON.stringify(scenarioWith({ angle: { kind: 'retraction', attack_at_apex_deg: 64, rate_deg_per_s: rate } })));
      for (const format of ['c', 'json', 'csv']) {
        const out = `unclamped.${format === 'c' ? 'h' : format}`;
        const r = pronk('export', name, '--format', format, '--out', out, '--t-max', '60', '--force');
        expect(r.code, r.stderr).toBe(2);
        expect(r.stderr).toContain(`${name}: attack table point 1 (t = 60 s): expected an angle in (0, 90] deg that float32 holds as a normal number, found ${64 + rate * 60} deg`);
        expect(r.stderr).toContain('--t-max: the retraction has no');
        expect(r.stderr).not.toMatch(/\n\s+at /);
        expect(r.stdout).toBe('');
        expect(existsSync(join(dir, out))).toBe(false);
        expect(existsSync(join(dir, 'unclamped.c'))).toBe(false);
      }
    }
  });

  it('a result file with a table knot at 1e39 s exits 2 naming the field (no T_MAX_S of inf, no "Infinity")', async () => {
    const scenario = parseScenario(scenarioWith(clampedRetraction));
    const result = {
      format: 'pronk-result',
      format_version: 1,
      kind: 'deadbeat',
      scenario,
      policy: { angle: { kind: 'time_table', time_since_apex_s: [0.1, 1e39], attack_deg: [70, 65] }, stiffness: { kind: 'constant' } },
      provenance: { pronk_version: '0.1.0', scenario_sha256: await contentHash(scenario), date: '2026-01-01T00:00:00Z' },
    };
    writeFileSync(join(dir, 'far-knot.json'), JSON.stringify(result));
    for (const format of ['c', 'json']) {
      const r = pronk('export', 'far-knot.json', '--format', format, '--out', `far.${format === 'c' ? 'h' : 'json'}`, '--force');
      expect(r.code).toBe(2);
      expect(r.stderr).toBe('far-knot.json: policy.angle.time_since_apex_s[1]: expected a time from 0 to 1e6 (s), found 1e+39\n');
      expect(existsSync(join(dir, `far.${format === 'c' ? 'h' : 'json'}`))).toBe(false);
    }
  });

  it('a negative constraint margin exits 2 naming the constraint; --force writes and marks the file', async () => {
    const scenario = parseScenario(scenarioWith(clampedRetraction));
    const result = {
      format: 'pronk-result',
      format_version: 1,
      kind: 'optimization',
      scenario,
      policy: scenario.policy,
      constraints: [{ name: 'peak_friction_ratio', value: 0.9, limit: 0.8, margin: -0.1 }],
      provenance: { pronk_version: '0.1.0', scenario_sha256: await contentHash(scenario), date: '2026-01-01T00:00:00Z' },
    };
    writeFileSync(join(dir, 'violated.json'), JSON.stringify(result));
    const refused = pronk('export', 'violated.json', '--format', 'csv', '--out', 'v.csv');
    expect(refused.code).toBe(2);
    expect(refused.stderr).toContain('violated.json: constraint "peak_friction_ratio" is violated: value 0.9, limit 0.8, margin -0.1 (a negative margin)');
    expect(existsSync(join(dir, 'v.csv'))).toBe(false);
    const forced = pronk('export', 'violated.json', '--format', 'csv', '--out', 'v.csv', '--force');
    expect(forced.code).toBe(0);
    expect(forced.stdout).toContain('FORCED EXPORT');
    expect(readFileSync(join(dir, 'v.csv'), 'utf8')).toContain('# FORCED EXPORT: written with --force although:');
  });
});
