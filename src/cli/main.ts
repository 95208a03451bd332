// The `pronk` command: argument parsing, help, and the mapping of errors to exit codes
// (0 ran, 2 bad input or usage, 1 internal error; docs/contract.md). Each command is a
// description of its options plus a `run` that presents the result of one core analysis.

import { parseArgs } from 'node:util';
import { InputError, UsageError, closestName } from '../core/errors.js';
import { SAFETY_CAUTION } from '../core/safety.js';
import { wrap } from './format.js';
import { simulateCommand } from './simulate.js';
import { stepdownCommand } from './stepdown.js';
import { robustnessCommand } from './robustness.js';
import { basinCommand } from './basin.js';
import { mergeCommand } from './merge.js';
import { mapCommand } from './map.js';
import { scanCommand } from './scan.js';
import { deadbeatCommand } from './deadbeat.js';
import { optimizeCommand } from './optimize.js';
import { exportCommand } from './export.js';

export interface OutputStream {
  write(chunk: string): unknown;
  isTTY?: boolean;
}

// Where a command writes; tests pass their own.
export interface CliIO {
  stdout: OutputStream;
  stderr: OutputStream;
  env: Record<string, string | undefined>;
}

export interface OptionSpec {
  type: 'boolean' | 'string';
  short?: string;
  valueName?: string; // shown in help: --strides N
  description: string;
}

export interface ParsedCommandLine {
  values: Record<string, string | boolean | undefined>;
  positionals: string[];
}

export interface Command {
  name: string;
  summary: string; // one line for the command list
  usage: string; // after "pronk ": "simulate [FILE] [--json] [--strides N]"
  details?: string; // paragraphs shown in the command's help, e.g. what FILE defaults to
  arguments?: { name: string; description: string }[];
  options: Record<string, OptionSpec>;
  maxPositionals: number;
  run(commandLine: ParsedCommandLine, io: CliIO): Promise<number>;
}

const HELP_OPTION: OptionSpec = { type: 'boolean', short: 'h', description: 'show this help' };

// In the order of the work: run a policy, analyse it, search for a better one, export it; then merging.
export const COMMANDS: readonly Command[] = [
  simulateCommand,
  mapCommand,
  scanCommand,
  basinCommand,
  stepdownCommand,
  robustnessCommand,
  optimizeCommand,
  deadbeatCommand,
  exportCommand,
  mergeCommand,
];

function defaultIO(): CliIO {
  return { stdout: process.stdout, stderr: process.stderr, env: process.env };
}

// Runs `pronk ARGV...` and returns the exit code; never exits the process itself.
export async function main(argv: string[], io: CliIO = defaultIO()): Promise<number> {
  try {
    return await dispatch(argv, io);
  } catch (error) {
    if (error instanceof InputError) {
      io.stderr.write(`${error.format()}\n`);
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
    io.stdout.write(programHelp());
    return 0;
  }
  if (first === 'help') {
    if (rest.length === 0) {
      io.stdout.write(programHelp());
      return 0;
    }
    io.stdout.write(commandHelp(findCommand(rest[0])));
    return 0;
  }
  if (first.startsWith('-')) {
    throw new UsageError(`pronk: expected a command before ${first} (one of ${commandNames()}); run 'pronk --help' for usage`);
  }
  const command = findCommand(first);
  if (wantsHelp(rest)) {
    io.stdout.write(commandHelp(command));
    return 0;
  }
  return command.run(parseCommandLine(command, rest), io);
}

function commandNames(): string {
  return COMMANDS.map((command) => command.name).join(', ');
}

function findCommand(name: string): Command {
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
    const position = args.findIndex((arg) => arg === named);
    const next = position >= 0 ? args[position + 1] : undefined;
    if (next !== undefined && /^-\.?\d/.test(next)) {
      return `option ${longName} needs a value (${shown}); for a value starting with "-" write ${longName}=${next}`;
    }
    return `option ${longName} needs a value (${shown})`;
  }
  return message.split('\n')[0];
}

function programHelp(): string {
  const width = Math.max(...COMMANDS.map((command) => command.name.length));
  const lines = [
    'pronk: spring-loaded inverted pendulum (SLIP) running analysis',
    '',
    'Usage: pronk <command> [FILE] [options]',
    '       pronk help <command>',
    '',
    'Commands:',
    ...COMMANDS.map((command) => `  ${command.name.padEnd(width)}  ${command.summary}`),
    '',
    'Every command takes --json (the result as JSON on stdout, nothing else there) and --help.',
    '',
    'Exit codes: 0 the command ran (a robot that falls is a result, not an error);',
    '            2 bad input or usage (the message names the field or option);',
    '            1 internal error (set PRONK_DEBUG=1 for a stack trace).',
    '',
    wrap(`Caution: ${SAFETY_CAUTION}`, 100, '', '  '),
    '',
  ];
  return lines.join('\n');
}

export function commandHelp(command: Command): string {
  const options = { ...command.options, help: HELP_OPTION };
  const optionRows = Object.entries(options).map(([name, spec]) => {
    const flag = `${spec.short ? `-${spec.short}, ` : ''}--${name}${spec.type === 'string' ? ` ${spec.valueName ?? 'VALUE'}` : ''}`;
    return [flag, spec.description] as const;
  });
  const argumentRows = (command.arguments ?? []).map((argument) => [argument.name, argument.description] as const);
  const width = Math.max(...[...optionRows, ...argumentRows].map(([left]) => left.length));
  const row = ([left, right]: readonly [string, string]) => `  ${left.padEnd(width)}  ${right}`;
  const lines = [`pronk ${command.name}: ${command.summary}`, '', `Usage: pronk ${command.usage}`, ''];
  if (command.details) lines.push(command.details, '');
  if (argumentRows.length) lines.push('Arguments:', ...argumentRows.map(row), '');
  lines.push('Options:', ...optionRows.map(row), '');
  return lines.join('\n');
}
