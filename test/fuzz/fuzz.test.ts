// The seeded fuzz suite over every command and every kind of input (test/fuzz/generate.ts makes
// the cases, test/fuzz/run.ts runs and judges them). CI runs FUZZ_CASES cases (default 240) from
// FUZZ_SEED (default 1); `npm run fuzz` runs thousands (FUZZ_CASES=N FUZZ_SEED=S npm run fuzz).
// The counts by command and outcome are printed either way; any failure fails the test, listing
// each with its command line; FUZZ_ONLY=ID (with the same FUZZ_SEED) runs that one case again.
import { rmSync } from 'node:fs';
import { afterAll, describe, expect, it } from 'vitest';
import { loadCommands } from '../../src/cli/main.js';
import { closeWorkerPool } from '../../src/worker/pool.js';
import { COMMANDS, generateCase } from './generate.js';
import { type CaseReport, PASSING, countsTable, fuzzRoot, runCase } from './run.js';

const CASES = Number(process.env.FUZZ_CASES ?? 240);
const SEED = Number(process.env.FUZZ_SEED ?? 1);
const root = fuzzRoot();

afterAll(async () => {
  await closeWorkerPool();
  if (process.env.FUZZ_KEEP === undefined) rmSync(root, { recursive: true, force: true });
});

describe(`fuzz: ${CASES} seeded cases (seed ${SEED})`, () => {
  it('generates cases for every command pronk has', async () => {
    expect([...COMMANDS].sort()).toEqual((await loadCommands()).map((command) => command.name).sort());
  });

  it('every case ends in exit 0 with finite, valid output or exit 2 naming the field', async () => {
    const reports: CaseReport[] = [];
    // FUZZ_ONLY=ID runs that one case (printed with its files, for reproducing a failure)
    const only = process.env.FUZZ_ONLY === undefined ? undefined : Number(process.env.FUZZ_ONLY);
    if (only !== undefined) console.log(JSON.stringify(generateCase(SEED, only), null, 1).slice(0, 20_000));
    for (let id = only ?? 0; id < (only === undefined ? CASES : only + 1); id++) reports.push(await runCase(generateCase(SEED, id), root));
    const failures = reports.filter((r) => !PASSING.includes(r.outcome));
    const slowest = [...reports].sort((a, b) => b.seconds - a.seconds).slice(0, 3);
    const total = reports.reduce((sum, r) => sum + r.seconds, 0);
    console.log(
      [
        `fuzz: ${CASES} cases from seed ${SEED} in ${total.toFixed(1)} s of command time`,
        countsTable(reports),
        `slowest: ${slowest.map((r) => `#${r.id} ${r.command} ${r.seconds.toFixed(1)} s`).join(', ')}`,
        ...(process.env.FUZZ_VERBOSE ? reports.filter((r) => r.outcome === 'exit 2').map((r) => `exit 2 #${r.id} ${r.command} [${r.variant}]: ${r.detail}`) : []),
        ...failures.map((r) => `FAILED #${r.id} ${r.command} [${r.variant}] ${r.outcome}: ${r.detail}`),
      ].join('\n'),
    );
    // every command is reached, and both outcomes are (a generator that only makes errors tests little)
    if (CASES >= 200 && only === undefined) {
      for (const outcome of ['exit 0', 'exit 2']) expect(reports.filter((r) => r.outcome === outcome).length, outcome).toBeGreaterThan(CASES / 5);
      // per command only in long runs: a few hundred cases may draw a command a dozen times
      const perCommand = CASES >= 1000 ? COMMANDS : [];
      for (const command of perCommand) expect(reports.filter((r) => r.command === command && r.outcome === 'exit 0').length, `${command} exit 0`).toBeGreaterThan(0);
      for (const command of COMMANDS) expect(reports.filter((r) => r.command === command && r.outcome === 'exit 2').length, `${command} exit 2`).toBeGreaterThan(0);
    }
    expect(failures.map((r) => `#${r.id} ${r.command} [${r.variant}] ${r.outcome}`)).toEqual([]);
  }, Math.max(170_000, CASES * 5_000));
});
