// The shape of a `pronk` command, shared by main.ts (parsing, help, dispatch) and every command's
// module: what a command declares (name, usage, options) and what it runs with (the parsed command
// line and where to write). Types only, so a command never imports the dispatcher.

export interface OutputStream {
  write(chunk: string): unknown;
  isTTY?: boolean;
  /** The terminal's width, when it is a terminal. */
  columns?: number;
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
