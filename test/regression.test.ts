// Byte-for-byte regression of every CLI command's output on the single-leg scenarios
// (test/regression/cases.mjs): simulate, map, scan, basin, stepdown, robustness, optimize,
// deadbeat, export, merge and shards. Timings and dates are masked; everything else must equal
// the goldens written by `node scripts/update-goldens.mjs` exactly.

import { existsSync, readdirSync, readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { CASES } from './regression/cases.mjs';
import { GOLDEN_DIR, goldenPath, maskTimings, runCases } from './regression/run.mjs';

/** The first line where two texts differ, for a readable failure. */
function firstDifference(expected: string, actual: string): string {
  const a = expected.split('\n');
  const b = actual.split('\n');
  for (let i = 0; i < Math.max(a.length, b.length); i++) {
    if (a[i] !== b[i]) return `line ${i + 1}:\n  golden: ${a[i] ?? '<end>'}\n  now:    ${b[i] ?? '<end>'}`;
  }
  return 'equal';
}

describe('regression: single-leg outputs byte for byte', () => {
  const results = runCases();

  it('runs every case and has a golden for every output', () => {
    expect(results.map((r) => r.name)).toEqual(CASES.map((c) => c.name));
    const expectedFiles = results.flatMap((r) => Object.keys(r.outputs).map((label) => goldenPath(r.name, label)));
    const present = readdirSync(GOLDEN_DIR).map((f) => `${GOLDEN_DIR}${f}`);
    expect(present.sort()).toEqual(expectedFiles.sort());
  });

  it('every case exits 0', () => {
    const failed = results.filter((r) => r.outputs.exit !== '0\n').map((r) => `${r.name}: ${r.outputs.stderr}`);
    expect(failed).toEqual([]);
  });

  for (const { name, outputs } of results) {
    it(`${name}`, () => {
      for (const [label, text] of Object.entries(outputs)) {
        const file = goldenPath(name, label);
        expect(existsSync(file), `${file} missing: run node scripts/update-goldens.mjs`).toBe(true);
        const golden = readFileSync(file, 'utf8');
        if (golden !== text) expect.fail(`${name} ${label} differs from its golden, ${firstDifference(golden, text)}`);
      }
    });
  }

  it('masks timings and dates only', () => {
    // A check of the mask itself: a changed number outside a timing field must show.
    expect(maskTimings('{"seconds": 1.5, "apex": 0.9402671}')).toBe('{"seconds": "<masked>", "apex": 0.9402671}');
    expect(maskTimings('on 2026-12-02T10:28:47.574Z')).toBe('on <date>');
  });
});
