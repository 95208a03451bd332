// Never lose a user's file: every output is checked before the work begins (links resolved, an
// input or a second output refused, a file the user did not name kept), and written through a
// temporary file renamed into place, all of a set or none. The module (src/cli/output-files.ts)
// directly, then each command through the built CLI with inputs small enough to run in moments.
import { spawnSync } from 'node:child_process';
import { chmodSync, existsSync, linkSync, lstatSync, mkdirSync, mkdtempSync, readdirSync, readFileSync, rmSync, statSync, symlinkSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, describe, expect, it } from 'vitest';
import { InputError } from '../src/core/errors.js';
import { checkOutputs, writeOutputs, type CheckedOutput } from '../src/cli/output-files.js';

const repo = join(dirname(fileURLToPath(import.meta.url)), '..');
const built = existsSync(join(repo, 'dist', 'src', 'cli', 'main.js'));
const root = mkdtempSync(join(tmpdir(), 'pronk-output-files-'));
afterAll(() => rmSync(root, { recursive: true, force: true }));

let folders = 0;
/** A fresh folder for one test. */
function folder(): string {
  const f = join(root, `t${folders++}`);
  mkdirSync(f);
  return f;
}

async function refusal(promise: Promise<unknown>): Promise<string> {
  try {
    await promise;
  } catch (error) {
    if (error instanceof InputError) return error.format();
    throw error;
  }
  throw new Error('expected an InputError');
}

describe('checkOutputs', () => {
  it('refuses an output that is an input, directly, through a symbolic link or a hard link', async () => {
    const f = folder();
    const input = join(f, 'robot.json');
    writeFileSync(input, '{}');
    symlinkSync(input, join(f, 'soft.json'));
    linkSync(input, join(f, 'hard.json'));
    const inputs = [{ path: input, what: 'the scenario file' }];
    expect(await refusal(checkOutputs([{ option: '--out', path: input }], inputs))).toBe(
      `--out: cannot write "${input}" (it is the scenario file "${input}", which this command reads): writing there would replace an input; name another file`,
    );
    expect(await refusal(checkOutputs([{ option: '--out', path: join(f, 'soft.json') }], inputs))).toContain(
      `(it is the scenario file "${input}" (through a link: it is ${input}), which this command reads)`,
    );
    expect(await refusal(checkOutputs([{ option: '--out', path: join(f, 'hard.json') }], inputs))).toContain('it is the scenario file');
    // an input given through a link is the same file too
    expect(await refusal(checkOutputs([{ option: '--out', path: input }], [{ path: join(f, 'soft.json'), what: 'the scenario file' }]))).toContain(
      'it is the scenario file',
    );
  });

  it('refuses two outputs that are the same file, and names both options', async () => {
    const f = folder();
    writeFileSync(join(f, 'a.svg'), 'old');
    symlinkSync(join(f, 'a.svg'), join(f, 'b.svg'));
    const message = await refusal(checkOutputs([{ option: '--out', path: join(f, 'a.svg') }, { option: '--plot', path: join(f, 'b.svg') }], []));
    expect(message).toMatch(/^--plot: cannot write ".*b\.svg" \(it is the same file as --out ".*a\.svg" \(through a link: it is .*a\.svg\)\): name two different files$/);
    const fresh = await refusal(checkOutputs([{ option: '--out', path: join(f, 'new.svg') }, { option: '--plot', path: join(f, '.', 'new.svg') }], []));
    expect(fresh).toContain('it is the same file as --out');
  });

  it('refuses a missing directory, a directory, a dangling link and a file the user did not name; lists every refusal', async () => {
    const f = folder();
    mkdirSync(join(f, 'sub'));
    symlinkSync(join(f, 'nowhere.json'), join(f, 'dangling.json'));
    writeFileSync(join(f, 'mine.c'), 'int main(void) { return 0; }\n');
    const message = await refusal(
      checkOutputs(
        [
          { option: '--out', path: join(f, 'missing', 'r.json') },
          { option: '--plot', path: join(f, 'sub') },
          { option: '--out', path: join(f, 'dangling.json') },
          { option: '--out', path: join(f, 'mine.c'), beside: join(f, 'mine.h') },
          { option: '--out', path: join(f, 'new-folder') + '/' },
        ],
        [],
        { source: 'pronk test' },
      ),
    );
    expect(message.split('\n')).toEqual([
      `pronk test: --out: cannot write "${join(f, 'missing', 'r.json')}" (no such directory: ${join(f, 'missing')})`,
      `pronk test: --plot: cannot write "${join(f, 'sub')}" (it is a directory)`,
      `pronk test: --out: cannot write "${join(f, 'dangling.json')}" (it is a symbolic link to a file that does not exist): remove the link or name its target`,
      `pronk test: --out: cannot write "${join(f, 'mine.c')}" (it is written beside "${join(f, 'mine.h')}", and a file by that name already exists ` +
        'that you did not name and that is not an earlier export of the same file): move it away, choose another --out name, or add --force to replace it',
      `pronk test: --out: cannot write "${join(f, 'new-folder')}/" (it ends in a path separator: a directory name)`,
    ]);
    // --force, or a file recognized as an earlier output of the same kind, may be replaced
    expect(await checkOutputs([{ option: '--out', path: join(f, 'mine.c'), beside: 'mine.h' }], [], { force: true })).toHaveLength(1);
    expect(await checkOutputs([{ option: '--out', path: join(f, 'mine.c'), beside: 'mine.h', mayReplace: (text) => text.startsWith('int main') }], [])).toHaveLength(1);
  });

  it.skipIf(process.getuid?.() === 0)('refuses a read-only file and a directory it may not write to', async () => {
    const f = folder();
    writeFileSync(join(f, 'locked.json'), 'keep');
    chmodSync(join(f, 'locked.json'), 0o444);
    expect(await refusal(checkOutputs([{ option: '--out', path: join(f, 'locked.json') }], []))).toContain('the file is read-only for you');
    mkdirSync(join(f, 'closed'));
    chmodSync(join(f, 'closed'), 0o555);
    expect(await refusal(checkOutputs([{ option: '--out', path: join(f, 'closed', 'r.json') }], []))).toContain('cannot create files in');
  });
});

describe('writeOutputs', () => {
  const tempsIn = (f: string) => readdirSync(f).filter((name) => name.startsWith('.'));

  it('replaces a named file through a rename, keeping its permissions, and writes through a link to its target', async () => {
    const f = folder();
    const file = join(f, 'r.json');
    writeFileSync(file, 'old');
    chmodSync(file, 0o640);
    const before = statSync(file).ino;
    symlinkSync(file, join(f, 'link.json'));
    const [out] = await checkOutputs([{ option: '--out', path: join(f, 'link.json') }], []);
    await writeOutputs([{ output: out!, text: 'new' }]);
    expect(readFileSync(file, 'utf8')).toBe('new');
    expect(lstatSync(join(f, 'link.json')).isSymbolicLink()).toBe(true); // the link itself is kept
    expect(readFileSync(join(f, 'link.json'), 'utf8')).toBe('new');
    expect(statSync(file).mode & 0o777).toBe(0o640);
    expect(statSync(file).ino).not.toBe(before); // a new file renamed into place, not the old one rewritten
    expect(tempsIn(f)).toEqual([]);
  });

  it('writes a character device in place (/dev/null)', async () => {
    const [out] = await checkOutputs([{ option: '--out', path: '/dev/null' }], []);
    expect(out!.special).toBe(true);
    await writeOutputs([{ output: out!, text: 'discarded' }]);
  });

  it('a set that fails part way leaves every file as it was and no temporary file', async () => {
    const f = folder();
    writeFileSync(join(f, 'p.h'), 'old header');
    const outputs = (await checkOutputs([{ option: '--out', path: join(f, 'p.h') }, { option: '--out', path: join(f, 'p.c'), beside: 'p.h' }], [])) as CheckedOutput[];
    mkdirSync(join(f, 'p.c')); // the .c's place taken after the check: its rename fails after the .h's succeeded
    const message = await refusal(writeOutputs([{ output: outputs[0], text: 'new header' }, { output: outputs[1], text: 'new source' }]));
    expect(message).toMatch(/^--out: cannot write ".*p\.c" \(.*\); nothing was written$/);
    expect(readFileSync(join(f, 'p.h'), 'utf8')).toBe('old header'); // put back
    expect(tempsIn(f)).toEqual([]);
    // and a new header is taken away again
    rmSync(join(f, 'p.h'));
    const fresh = (await checkOutputs([{ option: '--out', path: join(f, 'p.h') }, { option: '--out', path: join(f, 'q.c') }], [])) as CheckedOutput[];
    mkdirSync(join(f, 'q.c'));
    await refusal(writeOutputs([{ output: fresh[0], text: 'new header' }, { output: fresh[1], text: 'new source' }]));
    expect(existsSync(join(f, 'p.h'))).toBe(false);
    expect(tempsIn(f)).toEqual([]);
  });

  it('a directory removed after the check: an InputError naming the option, nothing left behind', async () => {
    const f = folder();
    mkdirSync(join(f, 'gone'));
    const [out] = await checkOutputs([{ option: '--plot', path: join(f, 'gone', 'x.svg') }], []);
    rmSync(join(f, 'gone'), { recursive: true });
    expect(await refusal(writeOutputs([{ output: out!, text: '<svg/>' }]))).toMatch(/^--plot: cannot write ".*x\.svg" \(no such file or directory\); nothing was written$/);
  });
});

// ---------------------------------------------------------------------------------------------
// Each command, through the built CLI: the reproductions of "Never lose a user's file".

function pronk(cwd: string, ...args: string[]) {
  const started = process.hrtime.bigint();
  const r = spawnSync(process.execPath, [join(repo, 'bin', 'pronk.js'), ...args], { encoding: 'utf8', cwd, env: { ...process.env, PRONK_DEBUG: '' } });
  return { code: r.status, stdout: r.stdout, stderr: r.stderr, seconds: Number(process.hrtime.bigint() - started) / 1e9 };
}

const demo = JSON.parse(readFileSync(join(repo, 'scenarios', 'demo.json'), 'utf8'));
const demoText = `${JSON.stringify(demo, null, 2)}\n`;

/** A folder holding robot.json (the demo scenario) and study.json (a tiny search over it, scenario_file robot.json). */
function workspace(): string {
  const f = folder();
  writeFileSync(join(f, 'robot.json'), demoText);
  writeFileSync(
    join(f, 'study.json'),
    `${JSON.stringify({
      scenario_file: 'robot.json',
      free_parameters: [{ path: 'policy.angle.rate_deg_per_s', lower: 0, upper: 80 }],
      objective: { terms: [{ kind: 'survival', terrain: 'random_walk', sigma_m: 0.005, rollouts: 4, strides: 3 }] },
      search: { method: 'COBYLA', max_evaluations: 4, restarts: 1 },
      seed: 1,
      holdout: { seed: 2, rollouts: 4 },
    })}\n`,
  );
  return f;
}

/** Runs a command that must be refused before any work: exit 2, one message naming the option, every file as it was. */
function expectRefused(f: string, args: string[], pattern: RegExp) {
  const before = new Map(readdirSync(f).map((name) => [name, statSync(join(f, name)).isDirectory() ? Buffer.from('(a directory)') : readFileSync(join(f, name))]));
  const r = pronk(f, ...args);
  expect(r.code, r.stderr).toBe(2);
  expect(r.stderr).toMatch(pattern);
  expect(r.stderr).not.toMatch(/\n\s+at /);
  expect(r.stdout).toBe('');
  // nothing started: no status line of the work, no progress
  expect(r.stderr.trim().split('\n')).toHaveLength(1);
  const after = readdirSync(f);
  expect(after.sort()).toEqual([...before.keys()].sort());
  for (const [name, bytes] of before) {
    const now = statSync(join(f, name)).isDirectory() ? Buffer.from('(a directory)') : readFileSync(join(f, name));
    expect(now.equals(bytes), name).toBe(true); // byte for byte
  }
  return r;
}

const ownInput = /--out: cannot write "(robot|study|part-1)\.json" \(it is the (scenario file|study file|study's scenario file|partial result) .*, which this command reads\): writing there would replace an input; name another file/;

describe.skipIf(!built)('pronk commands never replace their own input', () => {
  it('deadbeat --out naming its scenario', () => {
    const f = workspace();
    expectRefused(f, ['deadbeat', 'robot.json', '--ground=-0.02:0.01', '--knots', '3', '--out', 'robot.json'], ownInput);
  });

  it('basin --out naming its scenario, with and without --shard, and through a symbolic link', () => {
    const f = workspace();
    const grid = ['--heights', '0.45:0.5:2', '--speeds', '1.8:2:2', '--strides', '3', '--workers', '1'];
    expectRefused(f, ['basin', 'robot.json', ...grid, '--out', 'robot.json'], ownInput);
    expectRefused(f, ['basin', 'robot.json', ...grid, '--shard', '1/2', '--out', 'robot.json'], ownInput);
    symlinkSync('robot.json', join(f, 'alias.json'));
    expectRefused(f, ['basin', 'robot.json', ...grid, '--out', 'alias.json'], /--out: cannot write "alias\.json" \(it is the scenario file "robot\.json" \(through a link/);
  });

  it('merge --out naming one of its partial results', () => {
    const f = workspace();
    const grid = ['--heights', '0.45:0.5:2', '--speeds', '1.8:2:2', '--strides', '3', '--workers', '1'];
    for (const k of [1, 2]) expect(pronk(f, 'basin', 'robot.json', ...grid, '--shard', `${k}/2`, '--out', `part-${k}.json`).code).toBe(0);
    expectRefused(f, ['merge', 'part-1.json', 'part-2.json', '--out', 'part-1.json'], ownInput);
    // a merge that may write runs as before
    const merged = pronk(f, 'merge', 'part-1.json', 'part-2.json', '--json', '--out', 'merged.json');
    expect(merged.code, merged.stderr).toBe(0);
    expect(JSON.parse(readFileSync(join(f, 'merged.json'), 'utf8')).format).toBe('pronk-basin');
  });

  it('optimize --out naming its study or the scenario file the study reads', () => {
    const f = workspace();
    expectRefused(f, ['optimize', 'study.json', '--workers', '1', '--out', 'study.json'], ownInput);
    expectRefused(f, ['optimize', 'study.json', '--workers', '1', '--out', 'robot.json'], ownInput);
  });

  it('robustness, scan and map: --out and --plot naming the scenario, or the same file twice', () => {
    const f = workspace();
    expectRefused(f, ['robustness', 'robot.json', '--sigma', '0.01', '--rollouts', '4', '--out', 'robot.json'], ownInput);
    expectRefused(
      f,
      ['scan', 'robot.json', '--x', 'policy.angle.attack_at_apex_deg:62:64:2', '--y', 'policy.angle.rate_deg_per_s:30:40:2', '--out', 'robot.json'],
      ownInput,
    );
    symlinkSync('robot.json', join(f, 'robot.svg'));
    expectRefused(f, ['map', 'robot.json', '--plot', 'robot.svg'], /--plot: cannot write "robot\.svg" \(it is the scenario file/);
    expectRefused(f, ['basin', 'robot.json', '--out', 'fig.svg', '--plot', 'fig.svg'], /--plot: cannot write "fig\.svg" \(it is the same file as --out "fig\.svg"\): name two different files/);
  });
});

describe.skipIf(!built)('pronk export keeps what it was not asked to replace', () => {
  it('refuses an --out that is its input through a symbolic link', () => {
    const f = workspace();
    symlinkSync('robot.json', join(f, 'policy.json'));
    expectRefused(f, ['export', 'robot.json', '--format', 'json', '--out', 'policy.json'], /--out: cannot write "policy\.json" \(it is the input file "robot\.json" \(through a link/);
  });

  it('never replaces a .c beside the header that it did not write; --force does, an earlier export is replaced', () => {
    const f = workspace();
    const mine = '/* my own controller */\nint controller_step(void) { return 0; }\n';
    writeFileSync(join(f, 'controller.c'), mine);
    expectRefused(
      f,
      ['export', 'robot.json', '--format', 'c', '--out', 'controller.h'],
      /--out: cannot write "controller\.c" \(it is written beside "controller\.h", and a file by that name already exists that you did not name and that is not an earlier export of the same file\): move it away, choose another --out name, or add --force to replace it \(--force also writes a policy whose constraint margins are negative, marked as forced\)/,
    );
    expect(readFileSync(join(f, 'controller.c'), 'utf8')).toBe(mine);
    const forced = pronk(f, 'export', 'robot.json', '--format', 'c', '--out', 'controller.h', '--force');
    expect(forced.code, forced.stderr).toBe(0);
    expect(readFileSync(join(f, 'controller.c'), 'utf8')).toContain('#include "controller.h"');
    // the .c is now Pronk's export of controller.h: exporting again replaces it without --force
    const again = pronk(f, 'export', 'robot.json', '--format', 'c', '--out', 'controller.h', '--points', '5');
    expect(again.code, again.stderr).toBe(0);
    expect(readFileSync(join(f, 'controller.h'), 'utf8')).toContain('_N_POINTS 5u'); // the clamp at 0.4 s lies past t_max
    expect(readdirSync(f).filter((n) => n.startsWith('.'))).toEqual([]);
  });

  it('a C export that cannot write its .c writes no header either', () => {
    const f = workspace();
    mkdirSync(join(f, 'controller.c'));
    expectRefused(f, ['export', 'robot.json', '--format', 'c', '--out', 'controller.h'], /--out: cannot write "controller\.c" \(it is a directory\)/);
    expect(existsSync(join(f, 'controller.h'))).toBe(false);
  });

  it('an export refused for its numbers leaves an existing header as it was', () => {
    const f = workspace();
    writeFileSync(join(f, 'unclamped.json'), JSON.stringify({ ...demo, policy: { angle: { kind: 'retraction', attack_at_apex_deg: 64, rate_deg_per_s: 40 } } }));
    writeFileSync(join(f, 'controller.h'), 'previous header');
    const r = pronk(f, 'export', 'unclamped.json', '--format', 'c', '--out', 'controller.h', '--t-max', '60');
    expect(r.code).toBe(2);
    expect(readFileSync(join(f, 'controller.h'), 'utf8')).toBe('previous header');
    expect(existsSync(join(f, 'controller.c'))).toBe(false);
  });
});

describe.skipIf(!built)('a bad output path is refused before any work', () => {
  it('optimize with --out in a missing directory exits 2 at once, before the search starts', () => {
    const f = workspace();
    const r = expectRefused(f, ['optimize', 'study.json', '--workers', '1', '--out', 'no-such-dir/result.json'], /--out: cannot write "no-such-dir\/result\.json" \(no such directory: .*no-such-dir\)/);
    // Before this check the search ran to the end and only then failed to write. Time to the
    // refusal, for the record (not asserted: test timings depend on the machine's load).
    console.log(`optimize refused a bad --out in ${r.seconds.toFixed(2)} s`);
  });

  it('every command with --out or --plot refuses a missing directory before its work', () => {
    const f = workspace();
    const missing = /cannot write "nowhere\/x\.(json|svg)" \(no such directory/;
    expectRefused(f, ['deadbeat', 'robot.json', '--ground=-0.02:0.01', '--out', 'nowhere/x.json'], missing);
    expectRefused(f, ['basin', 'robot.json', '--plot', 'nowhere/x.svg'], missing);
    expectRefused(f, ['robustness', 'robot.json', '--sigma', '0.01', '--shard', '1/2', '--out', 'nowhere/x.json'], missing);
    expectRefused(f, ['export', 'robot.json', '--format', 'json', '--out', 'nowhere/x.json'], missing);
  });
});
