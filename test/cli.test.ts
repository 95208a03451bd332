// The `pronk` command line: help, usage errors and bad input (exit 2, one line per problem, no
// stack trace), internal errors (exit 1), and the simulate command's two outputs.
//
// The first part runs main() in-process with the engine replaced by a stub (vi.mock below), so it
// needs neither the WASM build nor dist/. The last part spawns the built CLI (node bin/pronk.js)
// and runs the real engine; it is skipped until `npm run build` has produced dist/.

import { spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { beforeEach, describe, expect, it, vi } from 'vitest';
import { COMMANDS, commandHelp, loadCommands, main, wrapUsage } from '../src/cli/main.js';
import { InputError } from '../src/core/errors.js';
import { SAFETY_CAUTION } from '../src/core/safety.js';
import { demoScenario } from '../src/core/scenario.js';
import type { SimulationResult } from '../src/core/simulate.js';

// A stand-in for the engine: a result of the contract's shape with `strides` made-up strides.
const engine = vi.hoisted(() => {
  const fakeResult = (strides: number, failed = false) => ({
    apexes: Array.from({ length: strides + 1 }, (_, i) => ({
      height_m: 0.45 - 0.001 * i,
      forward_speed_m_per_s: 3.35 + 0.001 * i,
      time_s: 0.25 * i,
      x_m: 0.85 * i,
    })),
    strides: Array.from({ length: strides }, (_, i) => ({
      index: i,
      apex_to_touchdown_s: 0.08,
      contact_s: 0.108,
      stride_s: 0.25,
      attack_deg: 66.5,
      ground_height_m: -0.002,
      peak_leg_force_N: 320,
      max_compression_m: 0.064,
      peak_friction_ratio: 0.43,
      energy_before_J: 90.2,
      energy_after_J: 90.2,
      energy_dissipated_J: 0,
      integrator_steps: 120,
      integrator_rejections: 1,
    })),
    outcome: failed
      ? { status: 'failed', strides_completed: strides, reason: 'fell_backward', detail: 'forward speed fell below zero in stance', failed_stride: strides }
      : { status: 'completed', strides_completed: strides, reason: null, detail: null, failed_stride: null },
    energy_J: 90.22,
    caution: 'caution text',
  });
  return { fakeResult, simulate: vi.fn() };
});
vi.mock('../src/core/simulate.js', () => ({ simulate: engine.simulate }));

beforeEach(() => {
  engine.simulate.mockReset();
  engine.simulate.mockImplementation(async (scenario: { strides: number }, options: { strides?: number } = {}) =>
    engine.fakeResult(options.strides ?? scenario.strides),
  );
});

interface Run {
  code: number;
  stdout: string;
  stderr: string;
}

async function pronk(args: string[], env: Record<string, string> = {}): Promise<Run> {
  let stdout = '';
  let stderr = '';
  const code = await main(args, {
    stdout: { write: (chunk: string) => (stdout += chunk) },
    stderr: { write: (chunk: string) => (stderr += chunk) },
    env,
  });
  return { code, stdout, stderr };
}

const directory = mkdtempSync(join(tmpdir(), 'pronk-cli-'));
function scenarioFile(name: string, content: unknown): string {
  const path = join(directory, name);
  writeFileSync(path, typeof content === 'string' ? content : JSON.stringify(content, null, 2));
  return path;
}

const noStackTrace = /^\s+at\s|Error:|\.ts:\d+|\.js:\d+/m;
const LOADED = await loadCommands();
const DEMO_NOTE = (command: string) => `pronk ${command}: no FILE given; running the built-in demo scenario (scenarios/demo.json)\n`;
// Help is wrapped to the width: compare texts with their white space collapsed.
const flat = (text: string) => text.replace(/\s+/g, ' ');

describe('help', () => {
  it.each([['--help'], ['-h'], ['help']])('pronk %s lists the commands, exit 0', async (flag) => {
    const run = await pronk([flag]);
    expect(run.code).toBe(0);
    expect(run.stderr).toBe('');
    expect(run.stdout).toMatch(/^Usage: pronk <command>/m);
    for (const command of COMMANDS) expect(run.stdout).toContain(`  ${command.name}`);
  });

  for (const command of LOADED) {
    it.each([[command.name, '--help'], [command.name, '-h'], ['help', command.name], [command.name, '--help', '--no-such-option']])(
      'pronk %s %s prints usage with every option, exit 0',
      async (...args) => {
        const run = await pronk(args);
        expect(run.code).toBe(0);
        expect(run.stderr).toBe('');
        expect(flat(run.stdout)).toContain(flat(`Usage: pronk ${command.usage}`));
        for (const [name, spec] of Object.entries(command.options)) {
          expect(run.stdout).toContain(`--${name}`);
          expect(flat(run.stdout)).toContain(flat(spec.description));
        }
        expect(run.stdout).toContain('--help');
      },
    );

    it(`pronk ${command.name}: every option is in the usage line, and the command list shows its own summary`, () => {
      for (const name of Object.keys(command.options)) expect(command.usage, `--${name}`).toMatch(new RegExp(`--${name}\\b`));
      expect(COMMANDS.find((entry) => entry.name === command.name)?.summary).toBe(command.summary);
    });
  }

  it.each([40, 60, 80, 132])('wraps every help text to the width (COLUMNS=%i), losing no word', async (width) => {
    const texts = [(await pronk(['--help'], { COLUMNS: String(width) })).stdout];
    for (const command of LOADED) texts.push((await pronk([command.name, '--help'], { COLUMNS: String(width) })).stdout);
    for (const text of texts) {
      // a line may overrun only when it is a single word (a long option group)
      for (const line of text.split('\n')) if (line.length > width) expect(line.trim(), line).not.toMatch(/\s/);
    }
    for (const command of LOADED) expect(flat(commandHelp(command, width))).toBe(flat(commandHelp(command, 1000)));
  });

  it('wraps the usage line between option groups, never inside [--option VALUE]', () => {
    const usage = wrapUsage('pronk basin [FILE] [--heights LO:HI:N] [--speeds LO:HI:N | --energy] --x PATH:LO:HI:N [--json]', 60);
    expect(usage.split('\n')).toEqual([
      'Usage: pronk basin [FILE] [--heights LO:HI:N]',
      '                   [--speeds LO:HI:N | --energy]',
      '                   --x PATH:LO:HI:N [--json]',
    ]);
  });

  it('uses the terminal width when stdout is a terminal', async () => {
    let stdout = '';
    await main(['--help'], { stdout: { write: (c: string) => (stdout += c), isTTY: true, columns: 50 }, stderr: { write: () => true }, env: {} });
    expect(Math.max(...stdout.split('\n').map((line) => line.length))).toBeLessThanOrEqual(50);
    expect(stdout).toContain('Commands:');
  });

  it('pronk --version prints the package version', async () => {
    const { version } = JSON.parse(readFileSync(new URL('../package.json', import.meta.url), 'utf8'));
    for (const flag of ['--version', '-V']) {
      const run = await pronk([flag]);
      expect(run).toEqual({ code: 0, stdout: `pronk ${version}\n`, stderr: '' });
    }
  });

  it('simulate --help describes FILE, --json and --strides N', async () => {
    const { stdout } = await pronk(['simulate', '--help']);
    expect(stdout).toMatch(/FILE .*demo/);
    expect(stdout).toContain('--json');
    expect(stdout).toContain('--strides N');
  });
});

describe('usage errors exit 2 with one line on stderr', () => {
  it.each<[string[], string]>([
    [['simulate', '--stides', '5'], 'pronk simulate: unknown option --stides (did you mean --strides?)'],
    [['simulate', '--jsno'], 'pronk simulate: unknown option --jsno (did you mean --json?)'],
    [['simulate', '-x'], 'pronk simulate: unknown option -x'],
    [['simulate', '--strides'], 'pronk simulate: option --strides needs a value (--strides N)'],
    [['simulate', '--json=yes'], 'pronk simulate: option --json takes no value'],
    [['simulate', '--strides', 'abc'], 'pronk simulate: --strides: expected a positive integer, found "abc"'],
    [['simulate', '--strides', '0'], 'pronk simulate: --strides: expected a positive integer, found "0"'],
    [['simulate', '--strides', '2.5'], 'pronk simulate: --strides: expected a positive integer, found "2.5"'],
    [['simulate', '--strides=-3'], 'pronk simulate: --strides: expected a positive integer, found "-3"'],
    [['simulate', 'a.json', 'b.json'], 'pronk simulate: unexpected argument "b.json" (usage: pronk simulate [FILE] [--json] [--strides N] [--trace-interval S])'],
    [['simulat'], 'pronk: unknown command "simulat" (did you mean simulate?)'],
    [['help', 'nonsense'], `pronk: unknown command "nonsense" (commands: ${COMMANDS.map((c) => c.name).join(', ')})`],
  ])('pronk %j', async (args, line) => {
    const run = await pronk(args);
    expect(run.code).toBe(2);
    expect(run.stdout).toBe('');
    expect(run.stderr).toBe(`${line}\n`);
    expect(engine.simulate).not.toHaveBeenCalled();
  });

  it('pronk with no command exits 2', async () => {
    const run = await pronk([]);
    expect(run.code).toBe(2);
    expect(run.stderr).toMatch(/^pronk: no command given/);
  });

  it('an option before the command exits 2', async () => {
    const run = await pronk(['--json', 'simulate']);
    expect(run.code).toBe(2);
    expect(run.stderr.trim().split('\n')).toHaveLength(1);
  });
});

describe('bad input files exit 2, naming the field, without a stack trace', () => {
  it('reports every invalid field of a scenario file', async () => {
    const path = scenarioFile('bad.json', {
      body: { mass_kg: -9, leg_length_m: 0.45, leg_stiffness_N_per_m: 5000, mas_kg: 1 },
      start: { apex_height_m: 0.45, forward_speed_m_per_s: 3 },
      policy: { angle: { kind: 'fixd', attack_deg: 64 } },
      strides: 0,
    });
    const run = await pronk(['simulate', path]);
    expect(run.code).toBe(2);
    expect(run.stdout).toBe('');
    expect(run.stderr.trimEnd().split('\n')).toEqual([
      `${path}: body.mass_kg: expected a number from 1e-6 to 1e6 (kg), found -9`,
      `${path}: body.mas_kg: unknown field`,
      `${path}: policy.angle.kind: expected one of fixed, retraction, time_table, found "fixd" (did you mean fixed?)`,
      `${path}: strides: expected an integer from 1 to 1000000, found 0`,
    ]);
    expect(run.stderr).not.toMatch(noStackTrace);
    expect(engine.simulate).not.toHaveBeenCalled();
  });

  it('reports a nonexistent file', async () => {
    const path = join(directory, 'missing.json');
    const run = await pronk(['simulate', path, '--json']);
    expect(run.code).toBe(2);
    expect(run.stdout).toBe('');
    expect(run.stderr).toBe(`${path}: cannot read the file (no such file)\n`);
  });

  it('reports a directory given as FILE', async () => {
    const run = await pronk(['simulate', directory]);
    expect(run.code).toBe(2);
    expect(run.stderr).toBe(`${directory}: cannot read the file (it is a directory)\n`);
  });

  it('reports invalid JSON with line and column', async () => {
    const path = scenarioFile('broken.json', '{\n  "body": { "mass_kg": 9, },\n}');
    const run = await pronk(['simulate', path]);
    expect(run.code).toBe(2);
    expect(run.stdout).toBe('');
    expect(run.stderr).toBe(`${path}: invalid JSON at line 2, column 27: trailing comma before "}" (JSON allows none)\n`);
    expect(run.stderr).not.toMatch(noStackTrace);
  });

  it('maps an InputError raised while simulating to exit 2', async () => {
    engine.simulate.mockRejectedValueOnce(
      new InputError([{ path: 'policy.angle.attack_deg', expected: 'an angle the kernel accepts', found: '89.99' }]),
    );
    const run = await pronk(['simulate']);
    expect(run.code).toBe(2);
    expect(run.stderr).toContain('policy.angle.attack_deg: expected an angle the kernel accepts, found 89.99\n');
  });
});

describe('internal errors exit 1', () => {
  it('prints one line, and a stack only with PRONK_DEBUG=1', async () => {
    engine.simulate.mockRejectedValueOnce(new Error('engine exploded\nsecond line'));
    const quiet = await pronk(['simulate', '--json']);
    expect(quiet.code).toBe(1);
    expect(quiet.stdout).toBe('');
    expect(quiet.stderr).toBe(`${DEMO_NOTE('simulate')}pronk: internal error: engine exploded (set PRONK_DEBUG=1 for a stack trace)\n`);

    engine.simulate.mockRejectedValueOnce(new Error('engine exploded'));
    const debug = await pronk(['simulate', '--json'], { PRONK_DEBUG: '1' });
    expect(debug.code).toBe(1);
    expect(debug.stderr).toMatch(/^pronk: internal error: engine exploded\n/m);
    expect(debug.stderr).toMatch(/^\s+at /m);
  });
});

describe('pronk simulate (stub engine)', () => {
  it('runs the demo scenario when FILE is omitted, and says so on stderr', async () => {
    const run = await pronk(['simulate']);
    expect(run.code).toBe(0);
    expect(run.stderr).toBe('pronk simulate: no FILE given; running the built-in demo scenario (scenarios/demo.json)\n');
    expect(engine.simulate).toHaveBeenCalledWith(demoScenario(), {});
    const demo = demoScenario();
    expect(run.stdout.split('\n')[0]).toBe(demo.name);
    expect(run.stdout).toMatch(/body +9 kg, leg 0\.45 m, stiffness 5000 N\/m/);
    expect(run.stdout).toMatch(/policy +attack 64 deg at apex, retracting \(steepening\) at 40 deg\/s, at most 80 deg/);
    expect(run.stdout).toMatch(/terrain +random walk, .*0\.005 m.*seed 20261201/);
    expect(run.stdout).toContain('Outcome: completed 20 strides.');
    expect(run.stdout.replace(/\s+/g, ' ')).toContain(SAFETY_CAUTION);
  });

  it('prints an aligned stride table with units in the header', async () => {
    const { stdout } = await pronk(['simulate']);
    const lines = stdout.split('\n');
    const titles = lines.findIndex((line) => line.startsWith('stride '));
    const [title, units, rule, start, first] = lines.slice(titles, titles + 5);
    for (const name of ['apex height', 'speed', 'attack', 'ground', 'contact', 'peak force', 'compression', 'friction']) {
      expect(title).toContain(name);
    }
    for (const unit of ['m/s', 'deg', 'ms', 'N', 'x weight', 'mm', '% leg', '|Fx/Fy|']) expect(units).toContain(unit);
    expect(rule).toMatch(/^[- ]+$/);
    expect(start).toMatch(/^start +0\.4500 +3\.350$/);
    // stride 0 of the stub: 320 N on 9 kg × 9.80665 m/s² = 3.63 body weights; 64 mm of a 0.45 m leg = 14.2 %
    expect(first.split(/\s+/)).toEqual(['0', '0.4490', '3.351', '66.50', '-0.0020', '108.0', '250.0', '320.0', '3.63', '64.0', '14.2', '0.430']);
    // right-aligned numeric columns end at the same place on every row
    const rows = lines.slice(titles + 4, titles + 4 + 20);
    expect(new Set(rows.map((row) => row.length)).size).toBe(1);
  });

  it('--strides N overrides the scenario', async () => {
    const run = await pronk(['simulate', '--strides', '3']);
    expect(run.code).toBe(0);
    expect(engine.simulate).toHaveBeenCalledWith(expect.anything(), { strides: 3 });
    expect(run.stdout).toContain('3 strides requested');
    expect(run.stdout).toContain('Outcome: completed 3 strides.');
  });

  it('--json prints the result as JSON and nothing else; status lines stay on stderr', async () => {
    const run = await pronk(['simulate', '--json', '--strides', '2']);
    expect(run.code).toBe(0);
    expect(run.stderr).toBe(DEMO_NOTE('simulate'));
    const described = { format: 'pronk-simulate', format_version: 1, model: 'slip', section: 'flight_apex', ...engine.fakeResult(2) };
    expect(JSON.parse(run.stdout)).toEqual(described);
    expect(run.stdout).toBe(`${JSON.stringify(described, null, 2)}\n`);
  });

  it('reads a scenario file', async () => {
    const path = scenarioFile('good.json', {
      name: 'contract example',
      body: { mass_kg: 80, leg_length_m: 1.0, leg_stiffness_N_per_m: 20000, gravity_m_per_s2: 9.81 },
      start: { apex_height_m: 1.0, forward_speed_m_per_s: 5.0 },
      policy: { angle: { kind: 'fixed', attack_deg: 68 }, stiffness: { kind: 'split', compression_N_per_m: 2e4, extension_N_per_m: 2.2e4 } },
      terrain: { kind: 'steps', ground_heights_m: [0, -0.1] },
      strides: 4,
    });
    const run = await pronk(['simulate', path]);
    expect(run.code).toBe(0);
    expect(run.stderr).toBe('');
    expect(run.stdout).toMatch(/^contract example\n/);
    expect(run.stdout).toContain('fixed attack angle 68 deg; stiffness 20000 N/m in compression, 22000 N/m in extension');
    expect(run.stdout).toContain('steps: ground 0, -0.1 m');
    expect(engine.simulate.mock.calls[0][0].strides).toBe(4);
  });

  it('reports a fall as a result, exit 0', async () => {
    engine.simulate.mockResolvedValueOnce(engine.fakeResult(5, true) as SimulationResult);
    const run = await pronk(['simulate']);
    expect(run.code).toBe(0);
    expect(run.stdout).toContain('Outcome: failed at stride 5 (fell_backward): forward speed fell below zero in stance; 5 strides completed.');
  });

  it('shows the first and last strides of a long run', async () => {
    const { stdout } = await pronk(['simulate', '--strides', '500']);
    expect(stdout).toContain('... 450 strides not shown (--json lists every stride) ...');
    expect(stdout).toMatch(/^39 /m);
    expect(stdout).not.toMatch(/^40 /m);
    expect(stdout).toMatch(/^499 /m);
  });
});

// ---------------------------------------------------------------------------------------------
// The built CLI, with the real engine. NEEDS `npm run build` (dist/ and build/pronk.wasm): skipped
// until then. The lead's `pretest` builds first.

const repo = join(dirname(fileURLToPath(import.meta.url)), '..');
const bin = join(repo, 'bin', 'pronk.js');
const built = existsSync(join(repo, 'dist', 'src', 'cli', 'main.js'));

function spawnPronk(args: string[]): Run {
  const child = spawnSync(process.execPath, [bin, ...args], { encoding: 'utf8', cwd: directory, env: { ...process.env, PRONK_DEBUG: '' } });
  return { code: child.status ?? -1, stdout: child.stdout, stderr: child.stderr };
}

describe.skipIf(!built)('node bin/pronk.js (built CLI, real engine)', () => {
  it('--help exits 0', () => {
    const run = spawnPronk(['simulate', '--help']);
    expect(run.code).toBe(0);
    expect(run.stdout).toContain('Usage: pronk simulate');
  });

  it('an unknown option exits 2', () => {
    const run = spawnPronk(['simulate', '--stides', '3']);
    expect(run.code).toBe(2);
    expect(run.stderr).toBe('pronk simulate: unknown option --stides (did you mean --strides?)\n');
  });

  it('a bad scenario exits 2 naming the field, with no stack trace', () => {
    const path = scenarioFile('spawn-bad.json', { ...demoScenario(), body: { mass_kg: 0, leg_length_m: 0.45, leg_stiffness_N_per_m: 5000 } });
    const run = spawnPronk(['simulate', path]);
    expect(run.code).toBe(2);
    expect(run.stderr).toBe(`${path}: body.mass_kg: expected a number from 1e-6 to 1e6 (kg), found 0\n`);
  });

  it('nonexistent and invalid-JSON files exit 2', () => {
    expect(spawnPronk(['simulate', 'nope.json']).code).toBe(2);
    const run = spawnPronk(['simulate', scenarioFile('spawn-broken.json', '{"strides": }')]);
    expect(run.code).toBe(2);
    expect(run.stderr).toMatch(/invalid JSON at line 1, column 13/);
    expect(run.stderr).not.toMatch(noStackTrace);
  });

  it('simulate --json runs the demo with the contract fields', () => {
    const run = spawnPronk(['simulate', '--json', '--strides', '3']);
    expect(run.code).toBe(0);
    expect(run.stderr).toBe(DEMO_NOTE('simulate'));
    const result = JSON.parse(run.stdout);
    expect(result).toMatchObject({ format: 'pronk-simulate', format_version: 1, model: 'slip', section: 'flight_apex' });
    expect(result.apexes).toHaveLength(4);
    expect(result.apexes[0]).toMatchObject({ height_m: 0.45, forward_speed_m_per_s: 3.35, time_s: 0 });
    for (const key of ['apex_to_touchdown_s', 'contact_s', 'stride_s', 'attack_deg', 'ground_height_m', 'peak_leg_force_N', 'max_compression_m', 'peak_friction_ratio']) {
      expect(typeof result.strides[0][key]).toBe('number');
    }
    expect(result.outcome).toMatchObject({ status: 'completed', strides_completed: 3, reason: null });
  });

  it('simulate prints the table, the outcome and the caution', () => {
    const run = spawnPronk(['simulate']);
    expect(run.code).toBe(0);
    expect(run.stderr).toContain('built-in demo scenario');
    expect(run.stdout).toContain('Outcome: completed 20 strides.');
    expect(run.stdout).toContain('Caution: ');
  });
});

describe.skipIf(!built)('simulate --trace-interval (built CLI, real engine)', () => {
  it('adds a trajectory to the JSON, sampled at the interval', () => {
    const run = spawnPronk(['simulate', '--json', '--strides', '2', '--trace-interval', '0.005']);
    expect(run.code).toBe(0);
    const t = JSON.parse(run.stdout).trajectory;
    expect(t.interval_s).toBe(0.005);
    expect(t.truncated).toBe(false);
    expect(t.time_s.length).toBe(t.y_m.length);
    expect(new Set(t.phase)).toEqual(new Set(['flight', 'stance']));
  });

  it('a bad interval exits 2 naming the option', () => {
    for (const bad of ['abc', '0', '-1', '1e-9']) {
      const run = spawnPronk(['simulate', `--trace-interval=${bad}`]);
      expect(run.code).toBe(2);
      expect(run.stderr).toMatch(/^pronk simulate: --trace-interval: expected a time step in seconds from 1e-5 to 10, found /);
    }
  });
});
