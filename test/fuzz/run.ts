// Running a fuzz case and judging it. A case passes when every command line it runs ends in
// exit 0 with finite, schema-valid output, or in exit 2 with a message that names the field or
// option; it fails on exit 1, an exception out of `main`, a stack trace or an internal error on
// stderr, NaN, Infinity or a null where a number belongs in an output, a file written outside the
// names it gave (--out, --plot), an input file changed, or a run longer than the time bound.
//
// The CLI runs in this process (`main` from src/cli/main.ts, ~0.3 s cheaper per case than a new
// node), each case in a fresh folder, its file arguments absolute paths into it.

import { createHash } from 'node:crypto';
import { lstatSync, mkdirSync, mkdtempSync, readFileSync, readdirSync, readlinkSync, rmSync, symlinkSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { Ajv2020 } from 'ajv/dist/2020.js';
import { main } from '../../src/cli/main.js';
import { type FuzzCase, tamper } from './generate.js';

/** How a case ended; everything but 'exit 0' and 'exit 2' is a failure. */
export type Outcome =
  | 'exit 0'
  | 'exit 2'
  | 'exit 1'
  | 'exit other'
  | 'exception'
  | 'stack trace'
  | 'vague message'
  | 'bad output'
  | 'stray write'
  | 'input changed'
  | 'too slow'
  | 'known issue';

/** 'known issue': a failure listed in KNOWN_ISSUES, counted on its own and not failing the suite. */
export const PASSING: readonly Outcome[] = ['exit 0', 'exit 2', 'known issue'];

/**
 * Failures found by this suite that belong to another part of the work, each with its reason;
 * they are counted in the table under 'known issue' until fixed (then remove the entry: the
 * cases fail again if the fix is undone).
 */
export const KNOWN_ISSUES: { name: string; matches: (detail: string, fuzz: FuzzCase) => boolean }[] = [
];

export interface CaseReport {
  id: number;
  command: string;
  variant: string;
  outcome: Outcome;
  /** For a failure: what was wrong, and the command line; for exit 2, the message. */
  detail?: string;
  seconds: number;
}

/** The time bound of one command line (seconds): generous on a loaded 2-core machine. */
export const CASE_SECONDS = 30;

const repo = join(import.meta.dirname, '..', '..');
const ajv = new Ajv2020({ strict: false, allErrors: false });
const validators = Object.fromEntries(
  (['scenario', 'study', 'result'] as const).map((name) => [name, ajv.compile(JSON.parse(readFileSync(join(repo, 'schemas', `${name}.schema.json`), 'utf8')))]),
);

// Fields that may be null in an output: those whose type in src/core says `| null` (each is
// documented there, e.g. a return-map sample's next apex when the stride fails). Every other field
// named with a unit must be a finite number: JSON.stringify writes NaN and Infinity as null.
function nullableFields(): Set<string> {
  const names = new Set<string>();
  const visit = (dir: string) => {
    for (const entry of readdirSync(dir, { withFileTypes: true })) {
      const path = join(dir, entry.name);
      if (entry.isDirectory()) visit(path);
      else if (entry.name.endsWith('.ts')) {
        for (const match of readFileSync(path, 'utf8').matchAll(/\b([A-Za-z_]\w*)\??: [\w[\]<>.|, '"]*\bnull\b/g)) names.add(match[1]);
      }
    }
  };
  visit(join(repo, 'src', 'core'));
  return names;
}
const NULLABLE = nullableFields();
const UNIT_SUFFIX = /_(m|s|J|N|kg|deg|m_per_s|deg_per_s|N_per_m|N_s_per_m|m_per_s2|m2|m2_per_s2|fraction|percent)$/;

// Every problem with a parsed output value: NaN/Infinity as strings, nulls under unit names.
function numberProblems(value: unknown, path: string, out: string[], allowNull: (key: string) => boolean): void {
  if (out.length > 3) return;
  if (typeof value === 'string') {
    if (/^-?(NaN|Infinity|inf|nan)$/.test(value)) out.push(`${path} = ${JSON.stringify(value)}`);
    return;
  }
  if (typeof value === 'number') {
    if (!Number.isFinite(value)) out.push(`${path} = ${value}`);
    return;
  }
  if (Array.isArray(value)) {
    value.forEach((item, i) => numberProblems(item, `${path}[${i}]`, out, allowNull));
    return;
  }
  if (value !== null && typeof value === 'object') {
    for (const [key, item] of Object.entries(value)) {
      if (item === null && UNIT_SUFFIX.test(key) && !allowNull(key)) out.push(`${path}.${key} = null`);
      else numberProblems(item, `${path}.${key}`, out, allowNull);
    }
  }
}

function checkJsonOutput(text: string, what: string, schema?: 'scenario' | 'study' | 'result'): string | undefined {
  let value: unknown;
  try {
    value = JSON.parse(text);
  } catch (error) {
    return `${what} is not JSON (${(error as Error).message.split('\n')[0]})`;
  }
  const problems: string[] = [];
  numberProblems(value, what, problems, (key) => NULLABLE.has(key));
  if (problems.length) return `${what}: ${problems.join(', ')}`;
  if (schema && !validators[schema](value)) return `${what}: not a valid ${schema} file (${ajv.errorsText(validators[schema].errors)})`;
  if (schema === undefined && typeof value === 'object' && value !== null && 'format' in value) {
    const format = (value as { format: unknown }).format;
    if (format === 'pronk-partial') {
      const scenario = (value as { scenario?: unknown }).scenario;
      if (!validators.scenario(scenario)) return `${what}: its scenario is not schema-valid (${ajv.errorsText(validators.scenario.errors)})`;
    } else if (typeof format !== 'string' || !format.startsWith('pronk-')) return `${what}: format ${JSON.stringify(format)}`;
  }
  return undefined;
}

// C source: outside comments, no infinity or NaN by name, no literal beyond float32's range or
// flushed to zero by it, no product of literals (the way an overflow once was written).
const FLOAT32_MAX = 3.4028234663852886e38; // IEEE 754 binary32 largest finite (common practice)
const FLOAT32_MIN_NORMAL = 1.1754943508222875e-38;
function cProblem(text: string, name: string): string | undefined {
  const code = text.replace(/\/\*[\s\S]*?\*\//g, ' ').replace(/\/\/[^\n]*/g, ' ').replace(/"(?:[^"\\\n]|\\.)*"/g, '""');
  const word = /\b(inf|nan|INFINITY|NAN|HUGE_VALF?)\b/.exec(code);
  if (word) return `${name} uses ${word[1]}`;
  if (/\d[\d.eE+-]*f\s*\*\s*\d/.test(code)) return `${name} multiplies literals (${/\d[\d.eE+-]*f\s*\*\s*[\d.eE+-]+f?/.exec(code)![0]})`;
  for (const match of code.matchAll(/(?<![\w.])(\d+\.?\d*(?:[eE][-+]?\d+)?|\.\d+(?:[eE][-+]?\d+)?)(f?)\b/g)) {
    const value = Number(match[1]);
    if (!Number.isFinite(value) || (match[2] === 'f' && (value > FLOAT32_MAX || (value !== 0 && value < FLOAT32_MIN_NORMAL)))) {
      return `${name} holds the literal ${match[0]}, outside float32's range`;
    }
  }
  return undefined;
}

// A listing of the folder: name -> content hash (or link target / 'dir').
function listing(dir: string): Map<string, string> {
  const out = new Map<string, string>();
  for (const name of readdirSync(dir)) {
    const path = join(dir, name);
    const stat = lstatSync(path);
    if (stat.isSymbolicLink()) out.set(name, `link:${readlinkSync(path)}`);
    else if (stat.isDirectory()) out.set(name, 'dir');
    else out.set(name, createHash('sha256').update(readFileSync(path)).digest('hex'));
  }
  return out;
}

// a field path after the file (robot.json: start: ..., study.json: constraints.friction_coefficient: ...) names the field too
const MESSAGE_NAMES_SOMETHING = /: [a-z_][\w.[\]]*: |expected|\bfound\b|: unknown field|unknown (option|command)|--[a-z][a-z-]*|cannot read|invalid JSON|invalid input|no FILES given|is required|takes no value|needs a value|refus|over the .* limit/i;

interface RunResult {
  code: number | 'exception';
  stdout: string;
  stderr: string;
  seconds: number;
}

async function runLine(args: string[]): Promise<RunResult> {
  let stdout = '';
  let stderr = '';
  const started = performance.now();
  let code: number | 'exception';
  try {
    code = await main(args, {
      stdout: {
        write: (chunk: string) => {
          stdout += chunk;
          return true;
        },
      },
      stderr: {
        write: (chunk: string) => {
          stderr += chunk;
          return true;
        },
      },
      env: {},
    });
  } catch (error) {
    code = 'exception';
    stderr += `\n[exception] ${error instanceof Error ? error.stack : String(error)}`;
  }
  return { code, stdout, stderr, seconds: (performance.now() - started) / 1000 };
}

// The verdict on one command line.
function judge(args: string[], run: RunResult): { outcome: Outcome; detail?: string } {
  const line = `pronk ${args.join(' ')}`;
  const say = (outcome: Outcome, why: string) => ({ outcome, detail: `${why}\n    ${line}\n    stderr: ${run.stderr.trim().slice(0, 400)}` });
  if (run.code === 'exception') return say('exception', 'main threw');
  if (/\n\s+at .+:\d+:\d+/.test(run.stderr)) return say('stack trace', 'a stack trace on stderr');
  if (run.code === 1) return say('exit 1', 'exit 1');
  if (run.code !== 0 && run.code !== 2) return say('exit other', `exit ${run.code}`);
  if (/internal error/.test(run.stderr)) return say('exit 1', 'an internal error on stderr');
  if (run.seconds > CASE_SECONDS) return say('too slow', `${run.seconds.toFixed(1)} s, over the ${CASE_SECONDS} s bound`);
  if (run.code === 2) {
    if (run.stdout !== '') return say('vague message', 'exit 2 with output on stdout');
    if (!MESSAGE_NAMES_SOMETHING.test(run.stderr)) return say('vague message', 'exit 2 without a field or option named');
    return { outcome: 'exit 2', detail: run.stderr.trim().split('\n').slice(-1)[0] };
  }
  if (args.includes('--json') && run.stdout !== '') {
    const problem = checkJsonOutput(run.stdout, 'stdout');
    if (problem) return say('bad output', problem);
  } else if (/\bNaN\b|\bundefined\b|Infinity|\[object Object\]/.test(run.stdout)) {
    return say('bad output', `the text output holds ${/\bNaN\b|\bundefined\b|Infinity|\[object Object\]/.exec(run.stdout)![0]}`);
  }
  return { outcome: 'exit 0' };
}

function materialize(dir: string, fuzz: FuzzCase): void {
  for (const file of fuzz.files) {
    const path = join(dir, file.name);
    if (file.directory) mkdirSync(path);
    else if (file.linkTo !== undefined) symlinkSync(file.linkTo, path);
    else writeFileSync(path, file.text ?? '');
  }
}

const resolveArgs = (dir: string, args: string[]) =>
  args.map((arg) => arg.replace(/^(--[a-z-]+=)?@(.*)$/, (_, flag: string | undefined, name: string) => `${flag ?? ''}${join(dir, name)}`));

// Files each output may be checked against a schema as.
function schemaOf(fuzz: FuzzCase, name: string): 'result' | undefined {
  if (name === 'result.json' && (fuzz.command === 'optimize' || fuzz.setup.some((line) => line[0] === 'deadbeat'))) return 'result';
  if (name === 'deadbeat.json') return 'result';
  return undefined;
}

/** Runs one case in a fresh folder under `root` and judges it. */
export async function runCase(fuzz: FuzzCase, root: string): Promise<CaseReport> {
  const dir = mkdtempSync(join(root, `case-${fuzz.id}-`));
  const report = (outcome: Outcome, seconds: number, detail?: string): CaseReport => ({ id: fuzz.id, command: fuzz.command, variant: fuzz.variant, outcome, detail, seconds });
  const repoBefore = readdirSync(process.cwd()).sort().join('\n');
  let seconds = 0;
  try {
    materialize(dir, fuzz);
    let before = listing(dir);
    for (const line of fuzz.setup) {
      const args = resolveArgs(dir, line);
      const run = await runLine(args);
      seconds += run.seconds;
      const verdict = judge(args, run);
      if (!PASSING.includes(verdict.outcome)) return report(verdict.outcome, seconds, `(setup) ${verdict.detail}`);
    }
    let variant = fuzz.variant;
    if (fuzz.tamper) {
      const path = join(dir, fuzz.tamper.file);
      try {
        const changed = tamper(fuzz.tamper.seed, readFileSync(path, 'utf8'));
        writeFileSync(path, changed.text);
        variant += ` (${changed.variant})`;
      } catch {
        // the setup was refused (exit 2): nothing to tamper with
      }
    }
    before = listing(dir);
    const args = resolveArgs(dir, fuzz.args);
    const run = await runLine(args);
    seconds += run.seconds;
    const verdict = judge(args, run);
    const after = listing(dir);
    const allowed = new Set(fuzz.outputs);
    for (const [name, hash] of after) {
      if (before.get(name) === hash) continue;
      if (!allowed.has(name)) return { ...report('stray write', seconds, `wrote ${name}\n    pronk ${args.join(' ')}`), variant };
      if (before.has(name) && fuzz.files.some((file) => file.name === name)) {
        return { ...report('input changed', seconds, `changed ${name}\n    pronk ${args.join(' ')}`), variant };
      }
    }
    for (const name of before.keys()) {
      if (!after.has(name)) return { ...report('input changed', seconds, `removed ${name}\n    pronk ${args.join(' ')}`), variant };
    }
    if (readdirSync(process.cwd()).sort().join('\n') !== repoBefore) return { ...report('stray write', seconds, `wrote into the working directory\n    pronk ${args.join(' ')}`), variant };
    if (verdict.outcome === 'exit 0') {
      for (const name of allowed) {
        if (!after.has(name) || before.get(name) === after.get(name)) continue;
        const text = readFileSync(join(dir, name), 'utf8');
        let problem: string | undefined;
        if (name.endsWith('.json')) problem = checkJsonOutput(text, name, schemaOf(fuzz, name));
        else if (name.endsWith('.svg')) problem = /^(<\?xml|<svg)/.test(text) && !/NaN|Infinity/.test(text) ? undefined : `${name} is not a finite SVG`;
        else if (name.endsWith('.c') || name.endsWith('.h')) problem = cProblem(text, name);
        else if (/\bNaN\b|\bundefined\b|(?<![\w.])Infinity\b/.test(text)) problem = `${name} holds NaN, undefined or Infinity`;
        if (problem) {
          const known = KNOWN_ISSUES.find((issue) => issue.matches(problem, fuzz));
          return { ...report(known ? 'known issue' : 'bad output', seconds, `${known ? `${known.name}: ` : ''}${problem}\n    pronk ${args.join(' ')}`), variant };
        }
      }
    }
    if (verdict.outcome === 'too slow') {
      const known = KNOWN_ISSUES.find((issue) => issue.matches(`too slow: ${verdict.detail}`, fuzz));
      if (known) return { ...report('known issue', seconds, `${known.name}: ${verdict.detail}`), variant };
    }
    return { ...report(verdict.outcome, seconds, verdict.detail), variant };
  } finally {
    // FUZZ_KEEP=1 keeps the case's folder (its files and outputs) for a look afterwards
    if (process.env.FUZZ_KEEP === undefined) rmSync(dir, { recursive: true, force: true });
  }
}

/** A folder for a run's cases. */
export function fuzzRoot(): string {
  return mkdtempSync(join(tmpdir(), 'pronk-fuzz-'));
}

/** Counts by command and outcome, as a table. */
export function countsTable(reports: readonly CaseReport[]): string {
  const outcomes = [...new Set(reports.map((r) => r.outcome))].sort((a, b) => (PASSING.includes(a) ? 0 : 1) - (PASSING.includes(b) ? 0 : 1) || a.localeCompare(b));
  const commands = [...new Set(reports.map((r) => r.command))].sort();
  const header = ['command', ...outcomes, 'total'];
  const rows = commands.map((command) => {
    const mine = reports.filter((r) => r.command === command);
    return [command, ...outcomes.map((o) => String(mine.filter((r) => r.outcome === o).length)), String(mine.length)];
  });
  rows.push(['all', ...outcomes.map((o) => String(reports.filter((r) => r.outcome === o).length)), String(reports.length)]);
  const widths = header.map((_, i) => Math.max(...[header, ...rows].map((row) => row[i].length)));
  const format = (row: string[]) => `| ${row.map((cell, i) => (i === 0 ? cell.padEnd(widths[i]) : cell.padStart(widths[i]))).join(' | ')} |`;
  return [format(header), `|${widths.map((w, i) => (i === 0 ? `:${'-'.repeat(w + 1)}` : `${'-'.repeat(w + 1)}:`)).join('|')}|`, ...rows.map(format)].join('\n');
}
