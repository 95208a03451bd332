// `pronk export` of two-leg scenarios and results (src/core/export/*): one table set shared by both
// legs or one per leg, the same number checks, CRC, caution and formats as the single-leg export;
// the C compiled with gcc and run against Pronk's reference float32 lookup; and a replay of the
// exported float32 tables through the two-leg simulator against the original policy.

import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { buildExport, type ExportOptions, type PolicyExport } from '../src/core/export/build.js';
import { writeC } from '../src/core/export/c99.js';
import { readCsv, writeCsv } from '../src/core/export/csv.js';
import { parseResult, scenarioSource } from '../src/core/export/input.js';
import { readPolicyTables, writeJson } from '../src/core/export/json.js';
import { crc32Float32, lookupFloat32 } from '../src/core/export/lookup.js';
import { DEG } from '../src/core/export/sample.js';
import { InputError } from '../src/core/errors.js';
import { simulateBiped } from '../src/core/models/biped-simulate.js';
import { parseScenario } from '../src/core/scenario.js';
import type { BipedScenario } from '../src/core/models/biped.js';
import { SAFETY_CAUTION } from '../src/core/safety.js';
import { contentHash, PRONK_VERSION } from '../src/core/version.js';

const dir = mkdtempSync(join(tmpdir(), 'pronk-biped-export-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const hasGcc = spawnSync('gcc', ['--version']).status === 0;
if (!hasGcc) console.warn('biped-export.test.ts: no gcc on the PATH: the C99 compile-and-run test is skipped (Debian: apt-get install -y gcc)');

// The demo walker (scenarios/demo-biped.json) with a hand-made attack table and stiffness table
// (invented numbers, near its 71 deg / 11.7 kN/m gait) and a right leg 10 % softer.
const walker = {
  model: 'biped',
  name: 'two-leg tables',
  body: { mass_kg: 28, leg_length_m: 0.6, leg_stiffness_N_per_m: 11700, gravity_m_per_s2: 9.80665 },
  legs: { right: { stiffness_scale: 0.9 } },
  start: { gait: 'walking', apex_height_m: 0.592, forward_speed_m_per_s: 0.93, offset_m: 0, leg: 'left' },
  policy: {
    angle: { kind: 'time_table', time_since_apex_s: [0, 0.1, 0.2, 0.4], attack_deg: [71, 71.2, 71.5, 72] },
    stiffness: { kind: 'time_table', time_since_apex_s: [0, 0.15, 0.3], compression_N_per_m: [11700, 11900, 12100], extension_N_per_m: [11700, 11600, 11500] },
  },
  terrain: { kind: 'flat' },
  strides: 12,
};

async function exportOf(value: object, options: ExportOptions = {}): Promise<PolicyExport> {
  return buildExport(await scenarioSource(value, 'walker.json'), { date: new Date('2026-01-02T03:04:05Z'), ...options });
}

describe('two-leg export: tables', () => {
  it('shared: one attack and one stiffness table set; per leg: one set per leg, each stiffness table times its leg\'s scale', async () => {
    const shared = await exportOf(walker);
    expect(shared.legs).toBe('shared');
    expect(shared.specs.map((s) => s.column)).toEqual(['attack_deg', 'compression_N_per_m', 'extension_N_per_m']);
    const perLeg = await exportOf(walker, { legs: 'per_leg' });
    expect(perLeg.specs.map((s) => s.column)).toEqual([
      'left_attack_deg', 'left_compression_N_per_m', 'left_extension_N_per_m',
      'right_attack_deg', 'right_compression_N_per_m', 'right_extension_N_per_m',
    ]);
    // same grid; the attack tables equal the shared one for both legs; the left stiffness is the
    // policy's (scale 1), the right 0.9 times it (a product: exact to one rounding)
    expect(perLeg.grid.axes[0].points).toEqual(shared.grid.axes[0].points);
    expect(perLeg.grid.values[0]).toEqual(shared.grid.values[0]);
    expect(perLeg.grid.values[3]).toEqual(shared.grid.values[0]);
    expect(perLeg.grid.values[1]).toEqual(shared.grid.values[1]);
    shared.grid.values[2].forEach((k, j) => expect(perLeg.grid.values[5][j]).toBe(k * 0.9));
    // every table exact at the breakpoints (piecewise linear policy on a grid holding its knots)
    for (const t of perLeg.tables) expect(t.float64_error.max_abs).toBeLessThan(1e-9 * (t.unit === 'deg' ? 90 : 12100));
    // the CRC covers the axis and every table, in order
    expect(perLeg.crc32).toBe(crc32Float32([perLeg.float32.axis, ...perLeg.float32.tables]));
    expect(perLeg.crc32_covers).toContain('left_attack_rad, left_compression_N_per_m, left_extension_N_per_m, right_attack_rad');
    expect(perLeg.caution.startsWith(SAFETY_CAUTION)).toBe(true);
  });

  it('JSON and CSV carry each leg and read back to the same numbers', async () => {
    const e = await exportOf(walker, { legs: 'per_leg' });
    const doc = JSON.parse(writeJson(e));
    expect(doc).toMatchObject({ model: 'biped', legs: { tables: 'per_leg', right: { stiffness_scale: 0.9, leg_length_m: 0.6 } } });
    expect(doc.clock).toMatch(/single-support apex/);
    const back = readPolicyTables(writeJson(e));
    expect(back.float32.right_attack_rad).toEqual(Array.from(e.float32.tables[3]));
    expect(back.float64.right_extension_N_per_m).toEqual(e.grid.values[5]);
    const csv = readCsv(writeCsv(e));
    expect(csv.right_compression_N_per_m).toEqual(e.grid.values[4]);
    expect(writeCsv(e)).toMatch(/# two legs \(one column set per leg\): left leg_length_m 0\.6, stiffness_scale 1,/);
  });

  it('refuses: a walking start without --t-max unless the angle is a table; per-leg tables of one leg; unsafe leg numbers', async () => {
    const fixed = { ...walker, policy: { angle: { kind: 'fixed', attack_deg: 71 }, stiffness: { kind: 'constant' } } };
    await expect(exportOf(fixed, { names: { points: '--points', max_error: '--max-error', max_stiffness_error: '--max-stiffness-error', t_max: '--t-max' } })).rejects.toThrow(
      /--t-max: a two-leg walking scenario with a fixed attack angle needs --t-max/,
    );
    const ok = await exportOf(fixed, { t_max_s: 0.5 });
    expect(ok.float32.tables[0][0]).toBe(Math.fround(71 * DEG));
    const single = { body: walker.body, start: { apex_height_m: 0.7, forward_speed_m_per_s: 2 }, policy: fixed.policy, strides: 3 };
    await expect(exportOf(single, { legs: 'per_leg' })).rejects.toThrow(/legs: expected shared for a single-leg scenario/);
    // a leg length float32 holds only as a subnormal is refused by name (1e-40 m is below the
    // scenario bound too, so it is checked on a source built by hand)
    const source = await scenarioSource(fixed, 'walker.json');
    (source.scenario as BipedScenario).legs = { right: { leg_length_m: 1e-40 } };
    expect(() => buildExport(source, { t_max_s: 0.5 })).toThrow(InputError);
    expect(() => buildExport(source, { t_max_s: 0.5 })).toThrow(/legs\.right\.leg_length_m \(the C macro \.\.\._RIGHT_LEG_LENGTH_M\).*subnormal/);
  });

  it('running: t_max is the free fall from the flight apex onto ground one (longer) leg below (closed form)', async () => {
    const running = {
      ...walker,
      legs: { right: { leg_length_m: 0.62 } },
      start: { gait: 'running', apex_height_m: 0.7, forward_speed_m_per_s: 3.6, leg: 'left' },
      policy: { angle: { kind: 'fixed', attack_deg: 68 }, stiffness: { kind: 'constant' } },
    };
    const e = await exportOf(running);
    // free fall from rest: y0 - g t^2 / 2 = (0 - L) + L sin(a), L = 0.62 m the longer leg (law)
    const expected = Math.sqrt((2 * (0.7 + 0.62 - 0.62 * Math.sin(68 * DEG))) / 9.80665);
    expect(e.grid.t_max_s).toBeCloseTo(expected, 12);
  });

  it('a two-leg optimization result exports, its held-out limits checked (a negative margin refused unless forced)', async () => {
    const scenario = parseScenario(walker);
    const result = {
      format: 'pronk-result',
      format_version: 1,
      kind: 'optimization',
      model: 'biped',
      scenario,
      policy: scenario.policy,
      constraints: [{ name: 'max_vertical_force_N', value: 900, limit: 850, margin: -50 }],
      provenance: { pronk_version: PRONK_VERSION, scenario_sha256: await contentHash(scenario), date: '2026-01-02T03:04:05Z' },
    };
    const source = await parseResult(result, 'result.json');
    expect(() => buildExport(source)).toThrow(/max_vertical_force_N.*negative margin/);
    expect(buildExport(source, { force: true }).forced).toBe(true);
    await expect(parseResult({ ...result, model: 'slip' }, 'result.json')).rejects.toThrow(/model: expected the kind of the result's scenario \("biped"\)/);
  });
});

describe('two-leg export: replay', () => {
  it('the float32 tables read back from the JSON drive the same walk as the policy (section states to 1e-6)', async () => {
    const e = await exportOf(walker);
    const back = readPolicyTables(writeJson(e));
    const times = back.float32.time_since_apex_s;
    const replay = parseScenario({
      ...walker,
      policy: {
        angle: { kind: 'time_table', time_since_apex_s: times, attack_deg: back.float32.attack_rad.map((r) => r / DEG) },
        stiffness: { kind: 'time_table', time_since_apex_s: times, compression_N_per_m: back.float32.compression_N_per_m, extension_N_per_m: back.float32.extension_N_per_m },
      },
    }) as BipedScenario;
    const a = await simulateBiped(parseScenario(walker) as BipedScenario);
    const b = await simulateBiped(replay);
    expect(a.outcome.status).toBe('completed');
    expect(b.outcome).toEqual(a.outcome);
    // float32 rounding of the table (about 6e-8 relative) moves the gait far less than 1e-6
    a.sections.forEach((s, i) => {
      expect(Math.abs(b.sections[i].height_m - s.height_m)).toBeLessThan(1e-6);
      expect(Math.abs(b.sections[i].forward_speed_m_per_s - s.forward_speed_m_per_s)).toBeLessThan(1e-6);
    });
    expect(a.sections.length).toBe(walker.strides + 1);
  });
});

describe.skipIf(!hasGcc)('two-leg export: C99 compiled with gcc and run', () => {
  it('per-leg lookups equal the reference float32 lookup bit for bit; the checksum equals the CRC macro', async () => {
    const e = await exportOf(walker, { legs: 'per_leg', grid: { by: 'points', points: 9 } });
    const c = writeC(e, 'wren', 'wren.h');
    writeFileSync(join(dir, 'wren.h'), c.header);
    writeFileSync(join(dir, 'wren.c'), c.source);
    writeFileSync(
      join(dir, 'main.c'),
      `#include <stdio.h>
#include <stdlib.h>
#include "wren.h"
int main(int argc, char **argv) {
    int i;
    printf("%08lx %08lx\\n", (unsigned long)WREN_TABLES_CRC32, (unsigned long)wren_tables_checksum());
    for (i = 1; i < argc; i++) {
        float t = (float)strtod(argv[i], NULL), la, ra, lc, le, rc, re;
        int f1 = wren_left_attack_lookup(t, &la), f2 = wren_right_attack_lookup(t, &ra);
        int f3 = wren_left_stiffness_lookup(t, &lc, &le), f4 = wren_right_stiffness_lookup(t, &rc, &re);
        printf("%.9g %.9g %.9g %.9g %.9g %.9g %d %d %d %d\\n", (double)la, (double)ra, (double)lc, (double)le, (double)rc, (double)re, f1, f2, f3, f4);
    }
    return 0;
}
`,
    );
    const cc = spawnSync('gcc', ['-std=c99', '-Wall', '-Wextra', '-Werror', '-pedantic', '-O2', 'wren.c', 'main.c', '-o', 'wren'], { cwd: dir, encoding: 'utf8' });
    expect(cc.status, cc.stderr).toBe(0);
    expect(cc.stderr).toBe('');
    const times = [-0.1, 0, 0.01, 0.05, 0.1, 0.123, 0.2, 0.25, 0.3, 0.37, 0.4, 0.5].map(Math.fround);
    const run = spawnSync(join(dir, 'wren'), times.map((t) => t.toPrecision(9)), { cwd: dir, encoding: 'utf8' });
    expect(run.status, run.stderr).toBe(0);
    const [crcLine, ...rows] = run.stdout.trim().split('\n');
    const [macro, computed] = crcLine.split(' ');
    expect(computed).toBe(macro);
    expect(Number.parseInt(macro, 16)).toBe(e.crc32);
    rows.forEach((row, i) => {
      const v = row.split(' ');
      const ref = (k: number) => lookupFloat32({ axis: e.float32.axis, values: e.float32.tables[k] }, times[i]);
      // columns: left attack, right attack, left compression, left extension, right compression, right extension
      [0, 3, 1, 2, 4, 5].forEach((k, col) => expect(Math.fround(Number(v[col]))).toBe(ref(k).value));
      expect(v[6]).toBe(ref(0).inRange ? '1' : '0');
    });
  });
});
