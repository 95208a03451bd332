// Every file a command writes (--out, --plot, the C export's pair, shard partial files) goes
// through here, in two steps:
//
// 1. `checkOutputs`, before any work is done: each path is resolved through symbolic links (the
//    file's real path when it exists, else its directory's real path and its name) and refused,
//    exit 2 naming the option, when its directory is missing or not writable, when it is a
//    directory, a dangling link or a device that is not a character device or a pipe, when it is
//    one of the command's inputs (same real path, or the same file through a hard link), when two
//    outputs are the same file, or when it would replace a file the user did not name (a file
//    written beside a named one) without `--force`. An existing file the user named is replaced:
//    that is what naming it asks for.
// 2. `writeOutputs`, once the result exists: each text goes to a temporary file in the target's own
//    directory (so the rename stays on one file system), flushed to disk, given the replaced file's
//    permissions, and only when every one is written are they renamed over their targets. A
//    failure removes every temporary file and puts back any target already replaced, so a reader
//    sees the old files or the new ones, never a half-written file or half of a set. A character
//    device or a pipe (/dev/null, /dev/stdout, a named pipe) is written in place: it cannot be
//    renamed over.
//
// Node only (file system).

import { constants } from 'node:fs';
import { access, chmod, link, lstat, open, realpath, rename, stat, unlink, writeFile } from 'node:fs/promises';
import { randomBytes } from 'node:crypto';
import { basename, dirname, join, resolve } from 'node:path';
import { unlinkSync } from 'node:fs';
import { InputError, describeFound, type InputIssue } from '../core/errors.js';

/** One file a command will write. */
export interface OutputRequest {
  /** The option that names it (`--out`, `--plot`); for a file written beside a named one, that one's option. */
  option: string;
  /** The path as given. */
  path: string;
  /**
   * Set for a file the user did not name, written beside the named file `beside` (the C export's
   * .c beside its .h): an existing file there is replaced only with `--force`, or when
   * `mayReplace` recognizes its opening text (the first 4 KiB) as an earlier output of the same kind.
   */
  beside?: string;
  mayReplace?: (existing: string) => boolean;
  /** What else `--force` does in this command, said where a refusal suggests it. */
  forceAlso?: string;
}

/** One file a command reads: an output may not be it. `what` names it in messages, e.g. `the scenario file`. */
export interface InputFile {
  path: string;
  what: string;
}

/** An output checked by `checkOutputs`, ready for `writeOutputs`. */
export interface CheckedOutput {
  option: string;
  /** The path as given (for messages and status lines). */
  path: string;
  /** The real absolute path written (symbolic links resolved). */
  target: string;
  /** The permission bits of the file it replaces, or undefined for a new file. */
  replacesMode: number | undefined;
  /** A character device or a pipe: written in place. */
  special: boolean;
}

export interface CheckOptions {
  /** Whether `--force` was given (lets a file the user did not name be replaced). */
  force?: boolean;
  /** The command, for messages (`pronk export`). */
  source?: string;
}

interface Identity {
  real: string;
  dev: number;
  ino: number;
}

const errorCode = (error: unknown) => (error as { code?: string }).code;

function reason(error: unknown): string {
  const code = errorCode(error);
  if (code === 'ENOENT') return 'no such file or directory';
  if (code === 'EISDIR') return 'it is a directory';
  if (code === 'ENOTDIR') return 'a part of the path is not a directory';
  if (code === 'EACCES' || code === 'EPERM') return 'permission denied';
  if (code === 'ENOSPC') return 'no space left on the device';
  if (code === 'EROFS') return 'a read-only file system';
  if (code === 'ELOOP') return 'too many levels of symbolic links';
  if (code === 'ENAMETOOLONG') return 'the name is too long';
  return error instanceof Error ? error.message : String(error);
}

async function identity(path: string): Promise<Identity | undefined> {
  try {
    const real = await realpath(path);
    const s = await stat(real);
    return { real, dev: s.dev, ino: s.ino };
  } catch {
    return undefined; // an input that cannot be read is reported by its reader
  }
}

const sameFile = (a: Identity, b: Identity) => a.real === b.real || (a.dev === b.dev && a.ino === b.ino);

// `cannot write "x" (why): what to do`, the form every write refusal takes.
const refusal = (request: OutputRequest, expected: string, why: string, advice?: string): InputIssue => ({
  path: request.option,
  expected,
  found: describeFound(request.path),
  message: `cannot write ${JSON.stringify(request.path)} (${why})${advice ? `: ${advice}` : ''}`,
});

/**
 * Checks every output before any work is done; throws one InputError listing every refusal.
 * Returns the checked outputs in the order of `requests` (undefined where a request is undefined:
 * an option not given).
 */
export async function checkOutputs(
  requests: readonly (OutputRequest | undefined)[],
  inputs: readonly (InputFile | undefined)[],
  options: CheckOptions = {},
): Promise<(CheckedOutput | undefined)[]> {
  const issues: InputIssue[] = [];
  const inputIds: { input: InputFile; id: Identity }[] = [];
  for (const input of inputs) {
    if (input === undefined) continue;
    const id = await identity(input.path);
    if (id) inputIds.push({ input, id });
  }
  const checked: { output: CheckedOutput; id: Identity | undefined; request: OutputRequest }[] = [];
  for (const request of requests) {
    if (request === undefined) continue;
    const result = await checkOne(request);
    if ('issue' in result) {
      issues.push(result.issue);
      continue;
    }
    const { output, id } = result;
    const where = output.target === resolve(request.path) ? '' : ` (through a link: it is ${output.target})`;
    const input = id && inputIds.find((x) => sameFile(x.id, id));
    if (input) {
      issues.push(
        refusal(
          request,
          'a file other than the inputs',
          `it is ${input.input.what} ${JSON.stringify(input.input.path)}${where}, which this command reads`,
          'writing there would replace an input; name another file',
        ),
      );
      continue;
    }
    const twin = checked.find((c) => c.output.target === output.target || (c.id && id && sameFile(c.id, id)));
    if (twin) {
      issues.push(
        refusal(
          request,
          `a file other than the ${twin.request.option} file`,
          `it is the same file as ${twin.request.option} ${JSON.stringify(twin.request.path)}${where}`,
          'name two different files',
        ),
      );
      continue;
    }
    if (request.beside !== undefined && output.replacesMode !== undefined && !options.force) {
      let recognized = false;
      if (request.mayReplace) {
        try {
          recognized = request.mayReplace(await readStart(output.target));
        } catch {
          recognized = false;
        }
      }
      if (!recognized) {
        issues.push(
          refusal(
            request,
            'a file name whose companion files do not exist yet',
            `it is written beside ${JSON.stringify(request.beside)}, and a file by that name already exists${where} that you did not name ` +
              'and that is not an earlier export of the same file',
            `move it away, choose another ${request.option} name, or add --force to replace it${request.forceAlso ? ` (--force also ${request.forceAlso})` : ''}`,
          ),
        );
        continue;
      }
    }
    checked.push({ output, id, request });
  }
  if (issues.length) throw new InputError(issues, options.source === undefined ? {} : { source: options.source });
  return requests.map((request) => checked.find((c) => c.request === request)?.output);
}

async function checkOne(request: OutputRequest): Promise<{ output: CheckedOutput; id: Identity | undefined } | { issue: InputIssue }> {
  const { path } = request;
  if (typeof path !== 'string' || path.trim() === '') {
    return { issue: { path: request.option, expected: 'a file name', found: describeFound(path) } };
  }
  if (/[\\/]$/.test(path)) {
    return { issue: refusal(request, 'a file name, not a directory', 'it ends in a path separator: a directory name') };
  }
  const absolute = resolve(path);
  let entry: Awaited<ReturnType<typeof lstat>> | undefined;
  try {
    entry = await lstat(absolute);
  } catch (error) {
    if (errorCode(error) !== 'ENOENT') return { issue: refusal(request, 'a writable file', reason(error)) };
  }
  if (entry === undefined) {
    // a new file: its directory must exist (through links) and take new files
    const parent = dirname(absolute);
    let realParent: string;
    try {
      realParent = await realpath(parent);
    } catch (error) {
      const why = errorCode(error) === 'ENOENT' ? `no such directory: ${parent}` : `its directory ${parent}: ${reason(error)}`;
      return { issue: refusal(request, 'a file in an existing directory', why) };
    }
    const s = await stat(realParent);
    if (!s.isDirectory()) return { issue: refusal(request, 'a file in an existing directory', `${parent} is not a directory`) };
    if (!(await writable(realParent))) {
      return { issue: refusal(request, 'a file in a directory you may write to', `permission denied: cannot create files in ${parent}`) };
    }
    return { output: { option: request.option, path, target: join(realParent, basename(absolute)), replacesMode: undefined, special: false }, id: undefined };
  }
  let target: string;
  try {
    target = await realpath(absolute);
  } catch (error) {
    const why =
      errorCode(error) === 'ENOENT'
        ? 'it is a symbolic link to a file that does not exist'
        : reason(error);
    return { issue: refusal(request, 'a writable file', why, errorCode(error) === 'ENOENT' ? 'remove the link or name its target' : undefined) };
  }
  const s = await stat(target);
  const id: Identity = { real: target, dev: s.dev, ino: s.ino };
  if (s.isDirectory()) return { issue: refusal(request, 'a file name, not a directory', `it is a directory${target === absolute ? '' : ` (${target})`}`) };
  if (s.isCharacterDevice() || s.isFIFO()) {
    if (!(await writable(target))) return { issue: refusal(request, 'a writable file', 'permission denied') };
    return { output: { option: request.option, path, target, replacesMode: undefined, special: true }, id };
  }
  if (!s.isFile()) {
    return { issue: refusal(request, 'a regular file, a character device or a pipe', 'it is neither a regular file, nor a character device, nor a pipe') };
  }
  if (!(await writable(target))) {
    return { issue: refusal(request, 'a file you may write to', 'the file is read-only for you: permission denied', 'make it writable or name another file') };
  }
  if (!(await writable(dirname(target)))) {
    return {
      issue: refusal(request, 'a file in a directory you may write to', `permission denied: cannot create the temporary file it is written through in ${dirname(target)}`),
    };
  }
  return { output: { option: request.option, path, target, replacesMode: s.mode & 0o7777, special: false }, id };
}

// The first 4 KiB of a file, as text: enough to recognize an earlier output by its opening lines
// without reading a large file whole.
async function readStart(path: string): Promise<string> {
  const handle = await open(path, 'r');
  try {
    const buffer = Buffer.alloc(4096);
    const { bytesRead } = await handle.read(buffer, 0, buffer.length, 0);
    return buffer.subarray(0, bytesRead).toString('utf8');
  } finally {
    await handle.close();
  }
}

async function writable(path: string): Promise<boolean> {
  try {
    await access(path, constants.W_OK);
    return true;
  } catch {
    return false;
  }
}

// Temporary files alive now, removed if the process exits before they are renamed.
const live = new Set<string>();
let exitHook = false;
function track(path: string): void {
  if (!exitHook) {
    exitHook = true;
    process.on('exit', () => {
      for (const p of live) {
        try {
          unlinkSync(p);
        } catch {
          // already gone
        }
      }
    });
  }
  live.add(path);
}

async function remove(path: string): Promise<void> {
  live.delete(path);
  try {
    await unlink(path);
  } catch {
    // already gone
  }
}

const tempName = (target: string, what: string) => join(dirname(target), `.${basename(target)}.${process.pid}-${randomBytes(6).toString('hex')}.${what}`);

function writeFailure(output: CheckedOutput, error: unknown, source: string | undefined): InputError {
  return new InputError(
    [
      {
        path: output.option,
        expected: 'a writable file',
        found: describeFound(output.path),
        message: `cannot write ${JSON.stringify(output.path)} (${reason(error)}); nothing was written${output.replacesMode === undefined ? '' : ' and the file is unchanged'}`,
      },
    ],
    source === undefined ? {} : { source },
  );
}

/**
 * Writes every text to its checked output, all or nothing (see the file comment). Throws an
 * InputError naming the option of the file that failed.
 */
export async function writeOutputs(files: readonly { output: CheckedOutput; text: string }[], options: { source?: string } = {}): Promise<void> {
  const regular = files.filter((f) => !f.output.special);
  const temps: { file: (typeof files)[number]; temp: string }[] = [];
  for (const file of regular) {
    const temp = tempName(file.output.target, 'tmp');
    track(temp);
    try {
      const handle = await open(temp, 'wx', 0o600);
      try {
        await handle.writeFile(file.text, 'utf8');
        await handle.sync();
      } finally {
        await handle.close();
      }
      // a new file gets the usual permissions (0666 less the umask); a replaced one keeps its own
      const umask = process.umask();
      await chmod(temp, file.output.replacesMode ?? (0o666 & ~umask));
    } catch (error) {
      await remove(temp);
      for (const t of temps) await remove(t.temp);
      throw writeFailure(file.output, error, options.source);
    }
    temps.push({ file, temp });
  }
  // With more than one file, keep each replaced file under a second name until all are renamed, to
  // put it back if a later rename fails.
  const backups = new Map<string, string>();
  if (temps.length > 1) {
    for (const { file } of temps) {
      if (file.output.replacesMode === undefined) continue;
      const backup = tempName(file.output.target, 'old');
      try {
        await link(file.output.target, backup);
        track(backup);
        backups.set(file.output.target, backup);
      } catch {
        // a file system without hard links: that file cannot be put back
      }
    }
  }
  for (let i = 0; i < temps.length; i++) {
    const { file, temp } = temps[i];
    try {
      await rename(temp, file.output.target);
      live.delete(temp);
    } catch (error) {
      for (let j = 0; j < i; j++) {
        const done = temps[j].file.output.target;
        const backup = backups.get(done);
        try {
          if (backup) await rename(backup, done);
          else if (temps[j].file.output.replacesMode === undefined) await unlink(done);
        } catch {
          // best effort: the message below says what was meant
        }
      }
      for (let j = i; j < temps.length; j++) await remove(temps[j].temp);
      for (const backup of backups.values()) await remove(backup);
      throw writeFailure(file.output, error, options.source);
    }
  }
  for (const backup of backups.values()) await remove(backup);
  for (const file of files) {
    if (!file.output.special) continue;
    try {
      await writeFile(file.output.target, file.text, 'utf8');
    } catch (error) {
      throw writeFailure(file.output, error, options.source);
    }
  }
}

/** One output: `writeOutputs` of one file. */
export async function writeOutput(output: CheckedOutput, text: string, options: { source?: string } = {}): Promise<void> {
  await writeOutputs([{ output, text }], options);
}

/** An option's file as an output request, or undefined when the option is absent. */
export const outputRequest = (option: string, path: string | undefined): OutputRequest | undefined => (path === undefined ? undefined : { option, path });

/**
 * Draws the figure of `command`'s result (SVG, 1280 x 800) into the checked `--plot` output and
 * says where on stderr (as `source`, default `pronk COMMAND`).
 */
export async function writePlotFile(io: { stderr: { write(chunk: string): unknown } }, command: string, plot: CheckedOutput, result: unknown, source = `pronk ${command}`): Promise<void> {
  const { renderPlot } = await import('../core/figures/plot-file.js');
  await writeOutput(plot, await renderPlot(command, result), { source });
  io.stderr.write(`${source}: figure written to ${plot.path}\n`);
}

/** The scenario FILE argument of a command as an input (undefined for the built-in demo). */
export const scenarioInput = (file: string | undefined): InputFile | undefined => (file === undefined ? undefined : { path: file, what: 'the scenario file' });
