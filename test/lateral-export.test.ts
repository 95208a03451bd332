// `pronk export` of a lateral leg-spring scenario (src/core/export/lateral.ts): the chosen values
// (touchdown angle, stiffness, attachment point d0 and d1, body, start) checked as float32, with
// their CRC-32, the caution and provenance, in C99 (compiled with gcc and run), JSON and CSV.

import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { buildLateralExport, writeLateralC, writeLateralCsv, writeLateralJson } from '../src/core/export/lateral.js';
import { crc32, float32Bytes } from '../src/core/export/lookup.js';
import { parseLateralScenario } from '../src/core/models/lateral.js';
import { SAFETY_CAUTION } from '../src/core/safety.js';

const dir = mkdtempSync(join(tmpdir(), 'pronk-lateral-export-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const hasGcc = spawnSync('gcc', ['--version']).status === 0;
if (!hasGcc) console.warn('lateral-export.test.ts: no gcc on the PATH: the C99 compile-and-run test is skipped (Debian: apt-get install -y gcc)');

const raw = JSON.parse(readFileSync(new URL('../scenarios/demo-hexapod.json', import.meta.url), 'utf8'));
const bin = new URL('../bin/pronk.js', import.meta.url).pathname;

describe('lateral export', () => {
  it('writes the chosen values as float32, radians for the angles, with a CRC-32 over them in order', async () => {
    const e = await buildLateralExport(parseLateralScenario(raw), 'hexapod.json', raw);
    const byName = Object.fromEntries(e.values.map((v) => [v.name, v]));
    expect(byName.TOUCHDOWN_ANGLE_RAD.float32).toBe(Math.fround((57 * Math.PI) / 180));
    expect(byName.ATTACHMENT_OFFSET_M.float32).toBe(Math.fround(-0.012));
    expect(byName.LEG_STIFFNESS_N_PER_M.float32).toBe(600);
    // CRC-32/ISO-HDLC of the little-endian float32 bytes (zlib's CRC; check value of "123456789" is 0xcbf43926, checked in export tests)
    expect(e.crc32).toBe(crc32(float32Bytes(Float32Array.from(e.values, (v) => v.float32))));
    expect(e.caution.startsWith(SAFETY_CAUTION)).toBe(true);
    const doc = JSON.parse(writeLateralJson(e));
    expect(doc).toMatchObject({ format: 'pronk-policy', model: 'lateral', values: { touchdown_angle_rad: { float32: byName.TOUCHDOWN_ANGLE_RAD.float32 } } });
    expect(writeLateralCsv(e)).toContain('attachment_offset_m,body.attachment_offset_m,m,');
  });

  it('refuses a value float32 cannot hold as a normal number, by name, writing nothing', async () => {
    const tiny = parseLateralScenario(raw);
    tiny.body.attachment_offset_m = 1e-40; // below the smallest normal float32 (2^-126, IEEE 754)
    await expect(buildLateralExport(tiny, 'hexapod.json', raw)).rejects.toThrow(/body\.attachment_offset_m \(the C macro \.\.\._ATTACHMENT_OFFSET_M\).*subnormal/);
  });

  it.skipIf(!hasGcc)('the C compiles with gcc -std=c99 -Werror -pedantic and its checksum equals the CRC macro and Pronk\'s CRC', async () => {
    const e = await buildLateralExport(parseLateralScenario(raw), 'hexapod.json', raw);
    const c = writeLateralC(e, 'skitter', 'skitter.h');
    writeFileSync(join(dir, 'skitter.h'), c.header);
    writeFileSync(join(dir, 'skitter.c'), c.source);
    writeFileSync(
      join(dir, 'main.c'),
      '#include <stdio.h>\n#include "skitter.h"\nint main(void) {\n    printf("%08lx %08lx %.9g\\n", (unsigned long)SKITTER_VALUES_CRC32, (unsigned long)skitter_values_checksum(), (double)SKITTER_ATTACHMENT_OFFSET_M);\n    return 0;\n}\n',
    );
    const cc = spawnSync('gcc', ['-std=c99', '-Wall', '-Wextra', '-Werror', '-pedantic', 'skitter.c', 'main.c', '-o', 'skitter'], { cwd: dir, encoding: 'utf8' });
    expect(cc.status, cc.stderr).toBe(0);
    const run = spawnSync(join(dir, 'skitter'), [], { encoding: 'utf8' });
    const [macro, computed, offset] = run.stdout.trim().split(' ');
    expect(computed).toBe(macro);
    expect(Number.parseInt(macro, 16)).toBe(e.crc32);
    expect(Math.fround(Number(offset))).toBe(Math.fround(-0.012));
  });

  it('pronk export refuses the table options with a lateral scenario by name', () => {
    const r = spawnSync(process.execPath, [bin, 'export', new URL('../scenarios/demo-hexapod.json', import.meta.url).pathname, '--format', 'json', '--out', join(dir, 'x.json'), '--t-max', '1'], { encoding: 'utf8' });
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(/--t-max: expected none with a "lateral" scenario/);
  });
});
