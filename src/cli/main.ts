// The `pronk` command: argument parsing, help, and the mapping of errors to exit codes
// (0 ran, 2 bad input or usage, 1 internal error; docs/contract.md). Each command is a
// description of its options plus a `run` that presents the result of one core analysis.
//
// Start-up is kept short: this module loads only the light helpers, and a command's module (and
// with it the validators, zod and the engine) is loaded when that command runs or shows its help.
// `pronk --help` and `pronk --version` load no command.

import { parseArgs } from 'node:util';
import { InputError, UsageError, closestName, formatIssues } from '../core/errors.js';
import { SAFETY_CAUTION } from '../core/safety.js';
import { PRONK_VERSION } from '../core/version.js';
import { wrap } from './format.js';

import type { CliIO, Command, OptionSpec, ParsedCommandLine } from './command.js';

export type { CliIO, Command, OptionSpec, OutputStream, ParsedCommandLine } from './command.js';

const HELP_OPTION: OptionSpec = { type: 'boolean', short: 'h', description: 'show this help' };

/** A command as the program's help lists it; `load` brings in its module. */
export interface CommandEntry {
  name: string;
  summary: string; // the command's own summary (a test keeps the two equal)
  load(): Promise<Command>;
}

// In the order of the work: run a policy, analyse it, search for a better one, export it; then merging.
export const COMMANDS: readonly CommandEntry[] = [
  {
    name: 'simulate',
    summary: 'run a scenario stride by stride: apexes, touchdowns, leg forces and the outcome',
    load: async () => (await import('./simulate.js')).simulateCommand,
  },
  {
    name: 'map',
    summary: "apex return map at the scenario's energy: fixed points, their stability and eigenvalues, the staircase",
    load: async () => (await import('./map.js')).mapCommand,
  },
  {
    name: 'scan',
    summary: 'stability-region map: fixed points of the return map over a grid of two scenario parameters',
    load: async () => (await import('./scan.js')).scanCommand,
  },
  {
    name: 'basin',
    summary: 'basin of attraction on flat ground over a grid of start apex heights and speeds',
    load: async () => (await import('./basin.js')).basinCommand,
  },
  {
    name: 'stepdown',
    summary: 'largest single permanent drop and rise of the ground the policy survives, to 1 mm',
    load: async () => (await import('./stepdown.js')).stepdownCommand,
  },
  {
    name: 'robustness',
    summary: 'Monte Carlo survival on seeded random terrain: survival with its Wilson 95 % interval, failures, apex RMS',
    load: async () => (await import('./robustness.js')).robustnessCommand,
  },
  {
    name: 'recover',
    summary: 'impulse recovery of a gait: kick it at a chosen moment, strides and time to recover, heading lost, survival',
    load: async () => (await import('./recover.js')).recoverCommand,
  },
  {
    name: 'optimize',
    summary: "NLopt search over a study's free policy parameters, re-scored on held-out seeds; writes a result file",
    load: async () => (await import('./optimize.js')).optimizeCommand,
  },
  {
    name: 'deadbeat',
    summary: 'one-step deadbeat table of attack angle (and extension stiffness) on time since apex, for unknown ground height',
    load: async () => (await import('./deadbeat.js')).deadbeatCommand,
  },
  {
    name: 'export',
    summary: 'write a policy as tables firmware runs: C99 header and source, JSON or CSV',
    load: async () => (await import('./export.js')).exportCommand,
  },
  {
    name: 'merge',
    summary: 'merge the partial results of a sharded run (--shard I/N) into the one-machine result',
    load: async () => (await import('./merge.js')).mergeCommand,
  },
];

/** Every command, loaded (tests, and anything that needs all their options). */
export async function loadCommands(): Promise<Command[]> {
  return Promise.all(COMMANDS.map((entry) => entry.load()));
}

function defaultIO(): CliIO {
  return { stdout: process.stdout, stderr: process.stderr, env: process.env };
}

// Runs `pronk ARGV...` and returns the exit code; never exits the process itself.
export async function main(argv: string[], io: CliIO = defaultIO()): Promise<number> {
  try {
    return await dispatch(argv, io);
  } catch (error) {
    if (error instanceof InputError) {
      // a refused model kind also names the commands that run it (loaded here: --help loads no command)
      const { withKindHint } = await import('./scenario-argument.js');
      io.stderr.write(`${formatIssues(error.issues.map(withKindHint), error.source)}\n`);
      return 2;
    }
    if (error instanceof UsageError) {
      io.stderr.write(`${error.message}\n`);
      return 2;
    }
    const message = error instanceof Error ? error.message : String(error);
    const firstLine = message.split('\n')[0] || 'unknown error';
    if (io.env.PRONK_DEBUG === '1') {
      io.stderr.write(`pronk: internal error: ${firstLine}\n${error instanceof Error ? error.stack ?? '' : ''}\n`);
    } else {
      io.stderr.write(`pronk: internal error: ${firstLine} (set PRONK_DEBUG=1 for a stack trace)\n`);
    }
    return 1;
  }
}

async function dispatch(argv: string[], io: CliIO): Promise<number> {
  const [first, ...rest] = argv;
  if (first === undefined) {
    throw new UsageError(`pronk: no command given (one of ${commandNames()}); run 'pronk --help' for usage`);
  }
  if (first === '--help' || first === '-h') {
    io.stdout.write(programHelp(helpWidth(io)));
    return 0;
  }
  if (first === '--version' || first === '-V') {
    io.stdout.write(`pronk ${PRONK_VERSION}\n`);
    return 0;
  }
  if (first === 'help') {
    if (rest.length === 0) {
      io.stdout.write(programHelp(helpWidth(io)));
      return 0;
    }
    io.stdout.write(commandHelp(await findCommand(rest[0]).load(), helpWidth(io)));
    return 0;
  }
  if (first.startsWith('-')) {
    throw new UsageError(`pronk: expected a command before ${first} (one of ${commandNames()}); run 'pronk --help' for usage`);
  }
  const command = await findCommand(first).load();
  if (wantsHelp(rest)) {
    io.stdout.write(commandHelp(command, helpWidth(io)));
    return 0;
  }
  return command.run(parseCommandLine(command, rest), io);
}

/**
 * The width help is wrapped to: the terminal's, or COLUMNS, or 80 when the output is not a
 * terminal; never narrower than 40 columns.
 */
export function helpWidth(io: CliIO): number {
  const fromTerminal = io.stdout.isTTY ? io.stdout.columns : undefined;
  const fromEnv = Number(io.env.COLUMNS);
  const width = fromTerminal ?? (Number.isInteger(fromEnv) && fromEnv > 0 ? fromEnv : 80);
  return Math.max(40, width);
}

function commandNames(): string {
  return COMMANDS.map((command) => command.name).join(', ');
}

function findCommand(name: string): CommandEntry {
  const command = COMMANDS.find((candidate) => candidate.name === name);
  if (command) return command;
  const suggestion = closestName(name, COMMANDS.map((candidate) => candidate.name));
  const hint = suggestion ? ` (did you mean ${suggestion}?)` : ` (commands: ${commandNames()})`;
  throw new UsageError(`pronk: unknown command ${JSON.stringify(name)}${hint}`);
}

// --help or -h anywhere before a `--` asks for help, whatever else is on the line.
function wantsHelp(args: readonly string[]): boolean {
  for (const arg of args) {
    if (arg === '--') return false;
    if (arg === '--help' || arg === '-h') return true;
  }
  return false;
}

function parseCommandLine(command: Command, args: string[]): ParsedCommandLine {
  const options = { ...command.options, help: HELP_OPTION };
  const prefix = `pronk ${command.name}`;
  let parsed: { values: Record<string, unknown>; positionals: string[] };
  try {
    parsed = parseArgs({
      args,
      options: Object.fromEntries(
        Object.entries(options).map(([name, spec]) => [name, spec.short ? { type: spec.type, short: spec.short } : { type: spec.type }]),
      ),
      allowPositionals: true,
      strict: true,
    });
  } catch (error) {
    throw new UsageError(`${prefix}: ${describeParseError(error, options, args)}`);
  }
  if (parsed.positionals.length > command.maxPositionals) {
    const extra = parsed.positionals[command.maxPositionals];
    throw new UsageError(
      `${prefix}: unexpected argument ${JSON.stringify(extra)} (usage: pronk ${command.usage})`,
    );
  }
  return { values: parsed.values as ParsedCommandLine['values'], positionals: parsed.positionals };
}

// node:util parseArgs's errors, reworded to name the option and what it needs.
function describeParseError(error: unknown, options: Record<string, OptionSpec>, args: readonly string[]): string {
  const code = (error as { code?: string }).code;
  const message = error instanceof Error ? error.message : String(error);
  const named = (/'(-[^' ]+)/.exec(message)?.[1] ?? '').replace(/,$/, '');
  if (code === 'ERR_PARSE_ARGS_UNKNOWN_OPTION') {
    const bare = named.replace(/^-+/, '').split('=')[0];
    const suggestion = closestName(bare, Object.keys(options));
    return `unknown option ${named}${suggestion ? ` (did you mean --${suggestion}?)` : ''}`;
  }
  if (code === 'ERR_PARSE_ARGS_INVALID_OPTION_VALUE') {
    const name = named.replace(/^-+/, '');
    const spec = options[name] ?? Object.values(options).find((candidate) => candidate.short === name);
    const longName = spec ? `--${Object.keys(options).find((key) => options[key] === spec)}` : named;
    if (/does not take an argument/.test(message)) return `option ${longName} takes no value`;
    const shown = `${longName} ${spec?.valueName ?? 'VALUE'}`;
    const position = args.indexOf(named);
    const next = position >= 0 ? args[position + 1] : undefined;
    if (next !== undefined && /^-\.?\d/.test(next)) {
      return `option ${longName} needs a value (${shown}); for a value starting with "-" write ${longName}=${next}`;
    }
    return `option ${longName} needs a value (${shown})`;
  }
  return message.split('\n')[0];
}

function programHelp(width: number): string {
  const nameWidth = Math.max(...COMMANDS.map((command) => command.name.length));
  const lines = [
    wrap('pronk: spring-loaded inverted pendulum (SLIP) running analysis', width),
    '',
    'Usage: pronk <command> [FILE] [options]',
    '       pronk help <command>',
    '       pronk --version',
    '',
    'Commands:',
    ...twoColumns(COMMANDS.map((command) => [command.name.padEnd(nameWidth), command.summary] as const), width),
    '',
    wrap('Every command takes --json (the result as JSON on stdout, nothing else there) and --help. Results go to stdout; status lines (files written, the demo used) and progress (on a terminal only) go to stderr.', width),
    '',
    'Exit codes:',
    ...twoColumns(
      [
        ['0', 'the command ran (a robot that falls is a result, not an error)'],
        ['2', 'bad input or usage (the message names the field or option)'],
        ['1', 'internal error (set PRONK_DEBUG=1 for a stack trace)'],
      ],
      width,
    ),
    '',
    wrap(`Caution: ${SAFETY_CAUTION}`, width, '', '  '),
    '',
  ];
  return lines.join('\n');
}

export function commandHelp(command: Command, width = 80): string {
  const options = { ...command.options, help: HELP_OPTION };
  const optionRows = Object.entries(options).map(([name, spec]) => {
    const flag = `${spec.short ? `-${spec.short}, ` : ''}--${name}${spec.type === 'string' ? ` ${spec.valueName ?? 'VALUE'}` : ''}`;
    return [flag, spec.description] as const;
  });
  const argumentRows = (command.arguments ?? []).map((argument) => [argument.name, argument.description] as const);
  const leftWidth = Math.max(...[...optionRows, ...argumentRows].map(([left]) => left.length));
  const pad = (rows: (readonly [string, string])[]) => rows.map(([left, right]) => [left.padEnd(leftWidth), right] as const);
  const lines = [wrap(`pronk ${command.name}: ${command.summary}`, width, '', '  '), '', wrapUsage(`pronk ${command.usage}`, width), ''];
  if (command.details) {
    for (const paragraph of command.details.split(/\n\s*\n/)) lines.push(wrap(paragraph, width), '');
  }
  if (argumentRows.length) lines.push('Arguments:', ...twoColumns(pad(argumentRows), width), '');
  lines.push('Options:', ...twoColumns(pad(optionRows), width), '');
  return lines.join('\n');
}

// Rows of "  LEFT  right", the right column wrapped under itself; when the left column takes more
// than half the width, the right one starts on the next line instead, indented.
function twoColumns(rows: readonly (readonly [string, string])[], width: number): string[] {
  const leftWidth = Math.max(0, ...rows.map(([left]) => left.length));
  const indent = 2 + leftWidth + 2;
  if (indent > width / 2) {
    return rows.flatMap(([left, right]) => [`  ${left.trimEnd()}`, wrap(right, width, ' '.repeat(8), ' '.repeat(8))]);
  }
  return rows.map(([left, right]) => wrap(right, width, `  ${left.padEnd(leftWidth)}  `, ' '.repeat(indent)));
}

// "Usage: pronk CMD ARGS..." wrapped between its bracketed groups (inside a group only when the group
// alone is too wide), continuation lines indented under the first argument.
export function wrapUsage(usage: string, width: number): string {
  const prefix = 'Usage: ';
  const words = usage.split(' ');
  const head = `${prefix}${words.slice(0, 2).join(' ')} `;
  const indent = ' '.repeat(Math.min(head.length, Math.floor(width / 3)));
  // an option and its value stay together (--x PATH:LO:HI:N)
  const tokens = groups(words.slice(2).join(' '), width - indent.length).reduce<string[]>((out, token) => {
    const previous = out[out.length - 1];
    if (previous !== undefined && /^--[\w-]+$/.test(previous) && !/^[-[]/.test(token)) out[out.length - 1] = `${previous} ${token}`;
    else out.push(token);
    return out;
  }, []);
  const lines: string[] = [];
  let current = head.trimEnd();
  let first = true;
  for (const token of tokens) {
    if (!first && current.length + 1 + token.length > width) {
      lines.push(current);
      current = indent + token;
    } else {
      current += ` ${token}`;
    }
    first = false;
  }
  lines.push(current);
  return lines.join('\n');
}

// Splits at the spaces outside brackets; a piece still wider than `width` is split again one
// bracket level deeper.
function groups(text: string, width: number, depthAllowed = 0): string[] {
  const pieces: string[] = [];
  let depth = 0;
  let current = '';
  for (const char of text) {
    if (char === '[') depth++;
    if (char === ']') depth--;
    if (char === ' ' && depth <= depthAllowed) {
      if (current) pieces.push(current);
      current = '';
    } else current += char;
  }
  if (current) pieces.push(current);
  return pieces.flatMap((piece) => (piece.length > width && depthAllowed < 3 && piece.includes(' ') ? groups(piece, width, depthAllowed + 1) : [piece]));
}
