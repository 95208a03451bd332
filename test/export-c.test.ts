// The C99 export compiled and run: it compiles warning-free under strict flags, its lookup gives
// the same float32 bits as the TypeScript reference (src/core/export/lookup.ts) at a few thousand
// times, clamps and flags as documented at and past both ends and for NaN, two exports with
// different prefixes link into one binary, and the run-time checksum equals the one written in
// the header (and changes when a table value does).
import { spawnSync } from 'node:child_process';
import { mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { buildExport, type PolicyExport } from '../src/core/export/build.js';
import { writeC } from '../src/core/export/c99.js';
import { scenarioSource } from '../src/core/export/input.js';
import { crc32Float32, hex32, lookupFloat32, nextFloat32, ulpFloat32 } from '../src/core/export/lookup.js';
import type { GridRequest } from '../src/core/export/sample.js';

const dir = mkdtempSync(join(tmpdir(), 'pronk-export-c-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const STRICT = ['-std=c99', '-Wall', '-Wextra', '-Werror', '-pedantic'];
// firmware-grade extras: no implicit double, no silent conversions, no shadowing, prototypes everywhere
const EXTRA = ['-Wconversion', '-Wdouble-promotion', '-Wshadow', '-Wstrict-prototypes', '-Wmissing-prototypes', '-Wcast-qual', '-Wundef'];
const hasCompiler = (cc: string) => spawnSync(cc, ['--version'], { encoding: 'utf8' }).status === 0;
const hasGcc = hasCompiler('gcc');
const hasGpp = hasCompiler('g++');
const hasClang = hasCompiler('clang');
// Skipped, never failed, without a compiler: say so where the test run shows it.
if (!hasGcc) console.warn('export-c.test.ts: no gcc on the PATH: the C99 compile-and-run tests are skipped (Debian: apt-get install -y gcc; .ci/run installs it)');
if (hasGcc && !hasGpp) console.warn('export-c.test.ts: no g++ on the PATH: the header-from-C++ check is skipped (Debian: apt-get install -y g++)');
if (hasGcc && !hasClang) console.warn('export-c.test.ts: no clang on the PATH: the clang compile test is skipped');
const hasFma = (() => {
  try {
    return /\bfma\b/.test(readFileSync('/proc/cpuinfo', 'utf8'));
  } catch {
    return false;
  }
})();

function compile(cc: string, args: string[]): void {
  const r = spawnSync(cc, args, { cwd: dir, encoding: 'utf8' });
  if (r.status !== 0) throw new Error(`${cc} ${args.join(' ')} failed:\n${r.stderr}`);
  expect(r.stderr).toBe(''); // not even a warning
}

function runBinary(binary: string, args: string[]): string {
  const r = spawnSync(join(dir, binary), args, { cwd: dir, encoding: 'utf8', maxBuffer: 64 << 20 });
  if (r.status !== 0) throw new Error(`${binary} failed: ${r.stderr}`);
  return r.stdout;
}

// Body of Seyfarth et al. 2002 (80 kg, 1 m, 20 kN/m, g 9.81), start apex 1 m at 5 m/s.
const body = { mass_kg: 80, leg_length_m: 1, leg_stiffness_N_per_m: 20000, gravity_m_per_s2: 9.81 };
const retraction = {
  name: 'retraction 60 deg + 50 deg/s, held at 80 deg',
  body,
  start: { apex_height_m: 1, forward_speed_m_per_s: 5 },
  policy: { angle: { kind: 'retraction', attack_at_apex_deg: 60, rate_deg_per_s: 50, max_deg: 80 }, stiffness: { kind: 'constant' } },
  strides: 10,
};
// A hand-made table policy with a stiffness schedule (invented numbers, to exercise the stiffness lookup).
const scheduled = {
  name: 'angle and stiffness tables',
  body,
  start: { apex_height_m: 1, forward_speed_m_per_s: 5 },
  policy: {
    angle: { kind: 'time_table', time_since_apex_s: [0.05, 0.1, 0.15, 0.2], attack_deg: [70, 68, 66.5, 65.25] },
    stiffness: {
      kind: 'time_table',
      time_since_apex_s: [0.06, 0.12, 0.22],
      compression_N_per_m: [20000, 21000, 22500],
      extension_N_per_m: [24000, 21000.5, 18000.25],
    },
  },
  strides: 10,
};

async function exportOf(value: object, grid: GridRequest, mode: 'breakpoints' | 'uniform' = 'breakpoints'): Promise<PolicyExport> {
  return buildExport(await scenarioSource(value, 'test.json'), { grid, mode, date: new Date('2026-01-02T03:04:05Z') });
}

function writePair(e: PolicyExport, prefix: string): void {
  const c = writeC(e, prefix, `${prefix}.h`);
  writeFileSync(join(dir, c.headerName), c.header);
  writeFileSync(join(dir, c.sourceName), c.source);
}

// A C program that reads times (one per line, strtod), calls both exports' lookups and prints
// value and flag with %.9g (enough digits to identify a float32), after both checksums.
const HARNESS = `
#include <stdio.h>
#include <stdlib.h>
#include "alpha.h"
#include "beta.h"
int main(int argc, char **argv) {
    char line[256];
    FILE *in;
    if (argc < 2 || (in = fopen(argv[1], "r")) == NULL) return 2;
    printf("%08lx %08lx %08lx %08lx\\n", (unsigned long)ALPHA_TABLES_CRC32, (unsigned long)alpha_tables_checksum(),
           (unsigned long)BETA_TABLES_CRC32, (unsigned long)beta_tables_checksum());
    while (fgets(line, sizeof line, in) != NULL) {
        float t = (float)strtod(line, NULL);
        float a = -1.0f, b = -1.0f, kc = -1.0f, ke = -1.0f;
        bool fa = alpha_attack_lookup(t, &a);
        bool fb = beta_attack_lookup(t, &b);
        bool fk = beta_stiffness_lookup(t, &kc, &ke);
        printf("%.9g %d %.9g %d %.9g %.9g %d\\n", (double)a, fa, (double)b, fb, (double)kc, (double)ke, fk);
    }
    fclose(in);
    return 0;
}
`;

// Times to evaluate: specials at and past both ends, every grid point and its float32
// neighbours, and pseudo-random times across and beyond the grid.
function testTimes(exports: PolicyExport[]): number[] {
  const times = [NaN, Infinity, -Infinity, -1, -1e-30, -0, 0, 1e-40, 1e30];
  for (const e of exports) {
    const axis = e.float32.axis;
    for (const t of axis) times.push(t, nextFloat32(t, 1), nextFloat32(t, -1));
    const last = axis[axis.length - 1];
    let seed = 12345;
    for (let i = 0; i < 1500; i++) {
      seed = (Math.imul(seed, 1103515245) + 12345) >>> 0; // an LCG: just a spread of times
      times.push(Math.fround(-0.05 + ((last + 0.1) * seed) / 2 ** 32));
    }
  }
  return times;
}

const asText = (t: number) => (Number.isNaN(t) ? 'nan' : t === Infinity ? 'inf' : t === -Infinity ? '-inf' : Object.is(t, -0) ? '-0' : t.toPrecision(17));
const parseC = (s: string) => (s === 'nan' || s === '-nan' ? NaN : s === 'inf' ? Infinity : s === '-inf' ? -Infinity : Math.fround(Number(s)));

describe.skipIf(!hasGcc)('C99 export, compiled with gcc and run', () => {
  let alpha: PolicyExport;
  let beta: PolicyExport;
  let times: number[];
  let lines: string[];

  beforeAll(async () => {
    alpha = await exportOf(retraction, { by: 'points', points: 37 });
    beta = await exportOf(scheduled, { by: 'points', points: 25 });
    writePair(alpha, 'alpha');
    writePair(beta, 'beta');
    writeFileSync(join(dir, 'harness.c'), HARNESS);
    times = testTimes([alpha, beta]);
    writeFileSync(join(dir, 'times.txt'), `${times.map(asText).join('\n')}\n`);
  });

  it('compiles with gcc -std=c99 -Wall -Wextra -Werror -pedantic (and stricter warnings), at -O0 and -O2', () => {
    for (const name of ['alpha.c', 'beta.c']) {
      compile('gcc', [...STRICT, '-O0', '-c', name, '-o', `${name}.O0.o`]);
      compile('gcc', [...STRICT, ...EXTRA, '-O2', '-c', name, '-o', `${name}.o`]);
    }
    // the header alone
    writeFileSync(join(dir, 'only.c'), '#include "alpha.h"\n#include "beta.h"\nint main(void) { return 0; }\n');
    compile('gcc', [...STRICT, ...EXTRA, '-c', 'only.c', '-o', 'only.o']);
  });

  it.skipIf(!hasGpp)('the headers compile from C++ too (extern "C"), with g++ -std=c++11 -pedantic', () => {
    writeFileSync(join(dir, 'only.cpp'), '#include "alpha.h"\n#include "beta.h"\nint main() { return 0; }\n');
    compile('g++', ['-std=c++11', '-Wall', '-Wextra', '-Werror', '-pedantic', '-fsyntax-only', 'only.cpp']);
  });

  it.skipIf(!hasClang)('compiles with clang -std=c99 -Wall -Wextra -Werror -pedantic', () => {
    for (const name of ['alpha.c', 'beta.c']) compile('clang', [...STRICT, ...EXTRA, '-O2', '-c', name, '-o', `${name}.clang.o`]);
  });

  it('two exports with different prefixes link into one binary; their lookups match the float32 reference bit for bit', () => {
    compile('gcc', [...STRICT, '-O2', 'harness.c', 'alpha.c', 'beta.c', '-o', 'harness']);
    const out = runBinary('harness', ['times.txt']).trim().split('\n');
    lines = out;
    expect(out.length).toBe(times.length + 1);
    expect(times.length).toBeGreaterThan(3000);
    let mismatches = 0;
    times.forEach((t, i) => {
      const cells = out[i + 1].split(' ');
      const a = lookupFloat32({ axis: alpha.float32.axis, values: alpha.float32.tables[0] }, t);
      const b = lookupFloat32({ axis: beta.float32.axis, values: beta.float32.tables[0] }, t);
      const kc = lookupFloat32({ axis: beta.float32.axis, values: beta.float32.tables[1] }, t);
      const ke = lookupFloat32({ axis: beta.float32.axis, values: beta.float32.tables[2] }, t);
      const expected = [a.value, a.inRange ? 1 : 0, b.value, b.inRange ? 1 : 0, kc.value, ke.value, kc.inRange ? 1 : 0];
      const got = [parseC(cells[0]), Number(cells[1]), parseC(cells[2]), Number(cells[3]), parseC(cells[4]), parseC(cells[5]), Number(cells[6])];
      // tolerance: none. The C does the reference's float32 operations in the same order
      // (IEEE 754 correctly rounded arithmetic), so the bits must be identical.
      if (got.some((g, k) => !Object.is(g, expected[k]))) mismatches++;
    });
    expect(mismatches).toBe(0);
  });

  it('clamps and flags at and past both ends, and for NaN, as documented', () => {
    const row = (t: number) => lines[1 + times.findIndex((x) => Object.is(x, t))].split(' ');
    const first = alpha.float32.tables[0][0];
    const lastIndex = alpha.float32.axis.length - 1;
    const last = alpha.float32.tables[0][lastIndex];
    const tMax = alpha.float32.axis[lastIndex];
    // law of the contract: the attack at the apex (t = 0) is 60 deg; held at 80 deg at the end
    expect(first).toBe(Math.fround((60 * Math.PI) / 180));
    expect(last).toBe(Math.fround((80 * Math.PI) / 180));
    const cases: [number, number, string][] = [
      [-1, first, '0'],
      [-0, first, '1'],
      [0, first, '1'],
      [NaN, first, '0'],
      [-Infinity, first, '0'],
      [tMax, last, '1'],
      [nextFloat32(tMax, 1), last, '0'],
      [Infinity, last, '0'],
      [1e30, last, '0'],
    ];
    for (const [t, value, flag] of cases) {
      const [v, f] = row(t);
      expect(parseC(v), `t = ${t}`).toBe(value);
      expect(f, `flag at t = ${t}`).toBe(flag);
    }
    // just inside the end: interpolated, in range
    expect(row(nextFloat32(tMax, -1))[1]).toBe('1');
  });

  it('the checksum function returns the CRC-32 written in the header, and notices a changed table value', () => {
    const [alphaMacro, alphaRun, betaMacro, betaRun] = lines[0].split(' ');
    expect(alphaRun).toBe(alphaMacro);
    expect(betaRun).toBe(betaMacro);
    // the header's value is the reference's CRC of the little-endian float32 bytes
    expect(`0x${alphaMacro}`).toBe(hex32(crc32Float32([alpha.float32.axis, ...alpha.float32.tables])));
    expect(`0x${betaMacro}`).toBe(hex32(beta.crc32));
    // one table value one ulp away: the checksum function must see it
    const source = readFileSync(join(dir, 'alpha.c'), 'utf8');
    const v = alpha.float32.tables[0][5];
    const literal = `${v.toPrecision(9)}f`;
    expect(source).toContain(literal);
    writeFileSync(join(dir, 'alpha.c'), source.replace(literal, `${nextFloat32(v, 1).toPrecision(9)}f`));
    compile('gcc', [...STRICT, '-O2', 'harness.c', 'alpha.c', 'beta.c', '-o', 'harness-changed']);
    const [macro, run] = runBinary('harness-changed', ['times.txt']).split('\n')[0].split(' ');
    expect(run).not.toBe(macro);
    writeFileSync(join(dir, 'alpha.c'), source);
  });

  it.skipIf(!hasFma)('built with fused multiply-add (gnu99 -mfma -ffp-contract=fast) it stays within 2 float32 ulp', () => {
    // Derived bound: fusing v0 + w*(v1 - v0) drops the rounding of the product (at most 1/2 ulp of
    // max(|v0|, |v1|)) and moves the final rounding (1/2 ulp each way); for same-sign neighbours within
    // a factor of 2 of each other that is at most 2 ulp of the result. Measured: see the report.
    compile('gcc', ['-std=gnu99', '-O2', '-mfma', '-ffp-contract=fast', 'harness.c', 'alpha.c', 'beta.c', '-o', 'harness-fma']);
    const out = runBinary('harness-fma', ['times.txt']).trim().split('\n');
    let worstUlps = 0;
    times.forEach((t, i) => {
      const cells = out[i + 1].split(' ');
      const pairs: [number, number][] = [
        [parseC(cells[0]), lookupFloat32({ axis: alpha.float32.axis, values: alpha.float32.tables[0] }, t).value],
        [parseC(cells[4]), lookupFloat32({ axis: beta.float32.axis, values: beta.float32.tables[1] }, t).value],
        [parseC(cells[5]), lookupFloat32({ axis: beta.float32.axis, values: beta.float32.tables[2] }, t).value],
      ];
      for (const [got, ref] of pairs) worstUlps = Math.max(worstUlps, Math.abs(got - ref) / ulpFloat32(ref));
    });
    expect(worstUlps).toBeLessThanOrEqual(2);
  });

  it("the README's control-loop snippet compiles against an export with and without a stiffness table", () => {
    const readme = readFileSync(new URL('../README.md', import.meta.url), 'utf8');
    const section = readme.slice(readme.indexOf('## Running a policy on the robot'));
    const snippet = /```c\n([\s\S]*?)```/.exec(section)?.[1];
    expect(snippet).toContain('hopper_attack_lookup');
    for (const [name, e] of [['with-stiffness', beta], ['without-stiffness', alpha]] as const) {
      mkdirSync(join(dir, name), { recursive: true });
      const c = writeC(e, 'hopper', 'hopper_policy.h');
      writeFileSync(join(dir, name, c.headerName), c.header);
      writeFileSync(join(dir, name, c.sourceName), c.source);
      writeFileSync(join(dir, name, 'loop.c'), snippet!);
      compile('gcc', [...STRICT, '-c', `${name}/loop.c`, '-o', `${name}/loop.o`]);
    }
  });
});
