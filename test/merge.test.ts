// Sharding a basin across machines and merging it back: the merged output is the one-machine
// output exactly (through the built CLI, as a cluster would run it), and every way a set of
// partial results can be wrong is exit 2 naming the file.
//
// NEEDS `npm run build` (dist/ and build/pronk.wasm); `npm test` builds first.
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, describe, expect, it } from 'vitest';
import { finishBasin } from '../src/core/analysis/basin.js';
import { mergePartials } from '../src/core/merge.js';
import { parseScenario } from '../src/core/scenario.js';
import type { PartialResult } from '../src/core/shard.js';
import { pronk } from './pronk-cli.js';
import { closeWorkerPool } from '../src/worker/pool.js';

afterAll(() => closeWorkerPool());

const repo = join(dirname(fileURLToPath(import.meta.url)), '..');
const bin = join(repo, 'bin', 'pronk.js');
const directory = mkdtempSync(join(tmpdir(), 'pronk-merge-'));
const at = (name: string) => join(directory, name);

// Seyfarth, Geyer, Herr 2003's human-like body with swing-leg retraction (docs/references.md), a policy
// with a sizable basin; random terrain in the file, which a basin ignores (it runs on flat ground).
const robot = {
  body: { mass_kg: 80, leg_length_m: 1, leg_stiffness_N_per_m: 20000, gravity_m_per_s2: 9.81 },
  start: { apex_height_m: 1, forward_speed_m_per_s: 5 },
  policy: { angle: { kind: 'retraction', attack_at_apex_deg: 62, rate_deg_per_s: 50 } },
  terrain: { kind: 'random_walk', sigma_m: 0.01, seed: 3 },
  strides: 20,
};
writeFileSync(at('robot.json'), JSON.stringify(robot));

function pronkBuilt(args: string[]) {
  const child = spawnSync(process.execPath, [bin, ...args], { encoding: 'utf8', cwd: directory, env: { ...process.env, PRONK_DEBUG: '' } });
  return { code: child.status, stdout: child.stdout, stderr: child.stderr };
}

const GRID = ['--heights', '0.9:1.6:9', '--speeds', '3:8:7', '--strides', '25']; // 63 cells: 21 per shard of 3
const ENERGY = ['--energy', '--heights', '0.85:2.3:40']; // 40 cells: shards of 14, 13, 13

describe('a basin in 3 shards, merged, is the one-machine run (built CLI)', () => {
  for (const [name, args] of [['grid', GRID], ['energy', ENERGY]] as const) {
    it(`${name} mode: --json parsed and byte for byte, and the terminal view`, () => {
      const one = pronkBuilt(['basin', 'robot.json', ...args, '--json']);
      expect(one.code).toBe(0);
      const files = [1, 2, 3].map((i) => `${name}_${i}.json`);
      files.forEach((file, i) => {
        const shard = pronkBuilt(['basin', 'robot.json', ...args, '--shard', `${i + 1}/3`, '--out', file, '--workers', String(1 + (i % 2))]);
        expect(shard.code).toBe(0);
        expect(shard.stdout).toBe('');
        expect(shard.stderr).toContain(`shard ${i + 1}/3`);
      });
      const sizes = files.map((file) => (JSON.parse(readFileSync(at(file), 'utf8')) as PartialResult).rows.length);
      expect(sizes).toEqual(name === 'grid' ? [21, 21, 21] : [14, 13, 13]); // shardRange: contiguous, sizes differ by <= 1
      const merged = pronkBuilt(['merge', files[2], files[0], files[1], '--json']); // any order
      expect(merged.code).toBe(0);
      expect(JSON.parse(merged.stdout)).toEqual(JSON.parse(one.stdout));
      expect(merged.stdout).toBe(one.stdout);
      // the result is not trivial: the grid has both converged and fallen cells
      const result = JSON.parse(one.stdout);
      expect(result.counts.converged).toBeGreaterThan(0);
      expect(result.counts.fell).toBeGreaterThan(0);

      const oneText = pronkBuilt(['basin', 'robot.json', ...args]);
      const mergedText = pronkBuilt(['merge', ...files]);
      expect(mergedText.code).toBe(0);
      expect(mergedText.stdout).toBe(oneText.stdout);
      expect(oneText.stdout).toContain('Attracted fraction');
    }, 30_000);
  }

  it('merge --out writes the merged output to a file', () => {
    const r = pronkBuilt(['merge', 'grid_1.json', 'grid_2.json', 'grid_3.json', '--json', '--out', 'merged.json']);
    expect(r.code).toBe(0);
    expect(r.stdout).toBe('');
    expect(readFileSync(at('merged.json'), 'utf8')).toBe(pronkBuilt(['basin', 'robot.json', ...GRID, '--json']).stdout);
  });
});

describe('merge dispatches to every shardable command', () => {
  // The other shardable commands (their own tests check their results): 2 shards merged give the
  // one-machine --json text and terminal view.
  const commands: [string, string[]][] = [
    ['robustness', ['--sigma', '0.005', '--rollouts', '40', '--seed', '4']],
    ['scan', ['--x', 'policy.angle.attack_at_apex_deg:60:64:3', '--y', 'policy.angle.rate_deg_per_s:25:50:2', '--samples', '12']],
  ];
  for (const [command, args] of commands) {
    it(`${command}: merged shards print what one machine prints`, async () => {
      const base = [command, at('robot.json'), ...args, '--workers', '1'];
      const one = await pronk([...base, '--json']);
      expect(one.code).toBe(0);
      const files = [1, 2].map((i) => at(`${command}_${i}.json`));
      for (const [i, file] of files.entries()) expect((await pronk([...base, '--shard', `${i + 1}/2`, '--out', file])).code).toBe(0);
      const merged = await pronk(['merge', files[1], files[0], '--json']);
      expect(merged.code).toBe(0);
      expect(merged.stdout).toBe(one.stdout);
      expect((await pronk(['merge', ...files])).stdout).toBe((await pronk(base)).stdout);
    }, 30_000);
  }
});

describe('mergePartials dispatches on the command to its finisher', () => {
  it('basin partials give finishBasin of the joined rows', async () => {
    const parts = [1, 2, 3].map((i) => ({ source: `grid_${i}.json`, partial: JSON.parse(readFileSync(at(`grid_${i}.json`), 'utf8')) }));
    const merged = await mergePartials(parts);
    expect(merged.command).toBe('basin');
    const rows = parts.flatMap((p) => p.partial.rows);
    expect(merged.result).toEqual(await finishBasin(parseScenario(parts[0].partial.scenario), parts[0].partial.options, rows));
  });
});

describe('pronk merge: bad sets of partial results are exit 2 naming the file', () => {
  const partial = (file: string) => JSON.parse(readFileSync(at(file), 'utf8')) as PartialResult;
  const write = (file: string, value: unknown) => writeFileSync(at(file), typeof value === 'string' ? value : JSON.stringify(value));
  const expectRefused = async (files: string[], message: RegExp) => {
    const r = await pronk(['merge', ...files.map(at)]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(message);
    expect(r.stderr).not.toMatch(/\n\s+at /); // no stack trace
    expect(r.stdout).toBe('');
  };

  it('a missing shard names the shard and the files given', async () => {
    await expectRefused(['grid_1.json', 'grid_3.json'], /expected all 3 shards, found shard 2 missing \(given: .*grid_1\.json is 1\/3, .*grid_3\.json is 3\/3\)/);
  });

  it('a shard given twice names both files', async () => {
    write('grid_1_copy.json', partial('grid_1.json'));
    await expectRefused(['grid_1.json', 'grid_1_copy.json', 'grid_2.json', 'grid_3.json'], /grid_1_copy\.json: expected shard 1 once, found also in .*grid_1\.json/);
  });

  it('shards of two different runs name the odd file', async () => {
    const other = await pronk(['basin', at('robot.json'), ...GRID, '--strides', '10', '--workers', '1', '--shard', '2/3', '--out', at('other_2.json')]);
    expect(other.code).toBe(0);
    await expectRefused(['grid_1.json', 'other_2.json', 'grid_3.json'], /other_2\.json: expected a shard of the same run as .*grid_1\.json/);
    // another scenario, same grid
    const faster = { ...robot, policy: { angle: { kind: 'retraction', attack_at_apex_deg: 62, rate_deg_per_s: 25 } } };
    write('robot25.json', faster);
    const r = await pronk(['basin', at('robot25.json'), ...GRID, '--workers', '1', '--shard', '3/3', '--out', at('robot25_3.json')]);
    expect(r.code).toBe(0);
    await expectRefused(['grid_1.json', 'grid_2.json', 'robot25_3.json'], /robot25_3\.json: expected a shard of the same run/);
  });

  it('a file that is not a partial result, unreadable, or not JSON names the file', async () => {
    await expectRefused(['grid_1.json', 'robot.json', 'grid_3.json'], /robot\.json: expected a partial result written by --shard/);
    await expectRefused(['grid_1.json', 'missing.json'], /missing\.json: cannot read the file \(no such file\)/);
    write('broken.json', '{"format": "pronk-partial",');
    await expectRefused(['broken.json'], /broken\.json: invalid JSON/);
    write('wrong_version.json', { ...partial('grid_1.json'), format_version: 99 });
    await expectRefused(['wrong_version.json', 'grid_2.json', 'grid_3.json'], /wrong_version\.json: format_version: expected 1, found 99/);
    write('no_shard.json', { ...partial('grid_1.json'), shard: 'one' });
    await expectRefused(['no_shard.json', 'grid_2.json', 'grid_3.json'], /no_shard\.json: shard: expected \{index, count/);
  });

  it('an edited partial result names the file', async () => {
    const short = partial('grid_2.json');
    short.rows.pop();
    write('short_2.json', short);
    await expectRefused(['grid_1.json', 'short_2.json', 'grid_3.json'], /short_2\.json: expected rows 21 onward/);
    const edited = partial('grid_1.json');
    (edited.scenario as { body: { mass_kg: number } }).body.mass_kg = 81;
    write('edited_1.json', edited);
    await expectRefused(['edited_1.json', 'grid_2.json', 'grid_3.json'], /edited_1\.json: scenario: expected the scenario whose hash is scenario_sha256/);
    for (const i of [1, 2, 3]) write(`old_${i}.json`, { ...partial(`grid_${i}.json`), pronk_version: i === 2 ? '0.0.1' : partial('grid_1.json').pronk_version });
    await expectRefused(['old_1.json', 'old_2.json', 'old_3.json'], /old_2\.json: pronk_version: expected/);
    for (const i of [1, 2, 3]) write(`teleport_${i}.json`, { ...partial(`grid_${i}.json`), command: 'teleport' });
    await expectRefused(['teleport_1.json', 'teleport_2.json', 'teleport_3.json'], /teleport_1\.json: command: expected a command that can be merged \(basin.*\), found "teleport"/);
    const badRow = partial('grid_3.json');
    badRow.rows[0] = ['x'];
    write('badrow_3.json', badRow);
    await expectRefused(['grid_1.json', 'grid_2.json', 'badrow_3.json'], /partial results .*badrow_3\.json: rows\[42\]: expected \[status/);
  });

  it('no files is a usage error', async () => {
    const r = await pronk(['merge']);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/pronk merge: no FILES given/);
  });
});

// Issue: `basin … --shard 1/1000000000000` was accepted, and `merge` of that file (or of a shard
// whose `shard.count` was edited to 1e15) ran a loop over every claimed shard: V8 died at 2.4 GB
// (exit 133). Now more shards than items are refused when the shard runs, and what a partial file
// claims is bounded by the run its own options describe, before anything is joined.
describe('shard counts and claims are bounded (no runaway merge)', () => {
  const partial = (file: string) => JSON.parse(readFileSync(at(file), 'utf8')) as PartialResult;
  const write = (file: string, value: unknown) => writeFileSync(at(file), JSON.stringify(value));
  const shardable: [string, string[], number][] = [
    ['basin', ['--heights', '0.9:1.6:3', '--speeds', '4:5:2', '--strides', '5'], 6],
    ['scan', ['--x', 'policy.angle.attack_at_apex_deg:60:64:3', '--y', 'policy.angle.rate_deg_per_s:25:50:2', '--samples', '4'], 6],
    ['robustness', ['--sigma', '0.005', '--rollouts', '6', '--strides', '5'], 6],
  ];
  for (const [command, args, items] of shardable) {
    it(`${command}: --shard with more shards than items names both numbers`, async () => {
      for (const shard of ['1/1000000000000', `1/${items + 1}`]) {
        const r = await pronk([command, at('robot.json'), ...args, '--workers', '1', '--shard', shard, '--out', at(`${command}_huge.json`)]);
        expect(r.code).toBe(2);
        const count = shard.split('/')[1];
        expect(r.stderr).toMatch(new RegExp(`--shard: expected at most ${items} shards .*the run has ${items} items.*found ${count} shards`));
        expect(r.stderr).not.toMatch(/\n\s+at /);
      }
      // exactly one shard per item is still a run
      const r = await pronk([command, at('robot.json'), ...args, '--workers', '1', '--shard', `${items}/${items}`, '--out', at(`${command}_last.json`)]);
      expect(r.code).toBe(0);
    }, 30_000);

    it(`${command}: a partial whose shard.count or shard.total was edited to 1e15 is exit 2, quickly`, async () => {
      const file = `${command}_1of2.json`;
      expect((await pronk([command, at('robot.json'), ...args, '--workers', '1', '--shard', '1/2', '--out', at(file)])).code).toBe(0);
      const original = partial(file);
      write(`${command}_count.json`, { ...original, shard: { ...original.shard, count: 1e15 } });
      let r = await pronk(['merge', at(`${command}_count.json`)]);
      expect(r.code).toBe(2);
      expect(r.stderr).toMatch(new RegExp(`${command}_count\\.json: shard\\.count: expected at most ${items} shards.*found 1000000000000000`));
      write(`${command}_total.json`, { ...original, shard: { ...original.shard, count: 1e15, total: 1e15 } });
      r = await pronk(['merge', at(`${command}_total.json`)]);
      expect(r.code).toBe(2);
      expect(r.stderr).toMatch(new RegExp(`${command}_total\\.json: shard\\.total: expected ${items} \\(the ${command} run its options describe has ${items} items\\), found 1000000000000000`));
      // a count within the run but more than the files given lists a few missing shards, not all
      write(`${command}_more.json`, { ...original, shard: { ...original.shard, count: items } });
      r = await pronk(['merge', at(`${command}_more.json`)]);
      expect(r.code).toBe(2);
      expect(r.stderr).toMatch(/expected all \d+ shards, found shard 2, 3/);
    }, 30_000);
  }
});

// Found by the fuzz suite: a scan partial whose row said "stable_apex_height_m": "NaN" was merged
// and printed as it stood; every field of a scan row is now checked as a run writes it.
describe('a scan partial with an edited row is refused naming the row', () => {
  const args = ['--x', 'policy.angle.attack_at_apex_deg:60:64:3', '--y', 'policy.angle.rate_deg_per_s:25:50:2', '--samples', '12', '--workers', '1'];
  const edits: [string, (row: Record<string, unknown>) => void][] = [
    ['a stable apex of "NaN"', (row) => { row.stable_apex_height_m = 'NaN'; }],
    ['a fixed point without its slope', (row) => { row.fixed_points = [{ apex_height_m: 1, forward_speed_m_per_s: 5, stable: true }]; }],
    ['a cell moved on the grid', (row) => { row.x = 1e308; }],
    ['a missing flag', (row) => { delete row.identity_map; }],
  ];
  for (const [what, edit] of edits) {
    it(what, async () => {
      const files = [1, 2].map((i) => at(`scanrow_${i}.json`));
      for (const [i, file] of files.entries()) expect((await pronk(['scan', at('robot.json'), ...args, '--shard', `${i + 1}/2`, '--out', file])).code).toBe(0);
      const partial = JSON.parse(readFileSync(files[0], 'utf8')) as PartialResult<Record<string, unknown>>;
      edit(partial.rows[1]);
      writeFileSync(files[0], JSON.stringify(partial));
      const r = await pronk(['merge', ...files, '--json']);
      expect(r.code).toBe(2);
      expect(r.stdout).toBe('');
      expect(r.stderr).toMatch(/rows: expected 6 scan cells with indices 0 to 5 in order, found row 1: /);
    }, 30_000);
  }
});
