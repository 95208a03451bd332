// Input files (scenario, study, result and partial files) are refused above a documented size
// before they are parsed: JSON.parse of a 50 MB file of "[" took 2.8 GB, and a file past V8's
// largest string (2^29 − 24 characters, about 512 MiB) cannot be read as text at all. Scenario,
// study and result files are small (a result with a 100 000-knot table is a few MB): 64 MiB. A
// partial result holds the rows of a shard (a basin cell about 75 bytes, a Monte Carlo rollout
// about 140, a scan cell about 400 to 600): 500 MiB, just under the string limit, and
// `--shard` refuses a shard whose rows could outgrow it (src/core/shard.ts).
//
// The size check works on a byte count and is environment-neutral; `readInputFile` reads from the
// file system, loading it on demand so that this module also loads in a browser (the workbench
// checks a dropped file's size with checkInputSize and never calls the reader).

import { InputError } from './errors.js';
import { parseJson } from './json-text.js';
import { PARTIAL_BYTES_LIMIT } from './shard.js';

/** The largest scenario, study or result file accepted, in bytes (64 MiB). */
export const MAX_INPUT_FILE_BYTES = 64 * 1024 * 1024;
/** The largest partial result accepted, in bytes (500 MiB). */
export const MAX_PARTIAL_FILE_BYTES = PARTIAL_BYTES_LIMIT;

/** The size limit for a kind of input file. */
export function inputSizeLimit(kind: InputFileKind): number {
  return kind === 'partial result' ? MAX_PARTIAL_FILE_BYTES : MAX_INPUT_FILE_BYTES;
}

/** What an input file is, as messages name it: 'scenario file', 'study file', ... */
export type InputFileKind = 'scenario file' | 'study file' | 'result or scenario file' | 'partial result';

function mebibytes(bytes: number): string {
  const value = bytes / (1024 * 1024);
  return `${value >= 10 ? Math.round(value) : Number(value.toFixed(1))} MiB`;
}

/** Refuses an input of `bytes` bytes over its kind's limit, naming the size found and the limit. */
export function checkInputSize(bytes: number, source: string, kind: InputFileKind): void {
  const limit = inputSizeLimit(kind);
  if (bytes <= limit) return;
  throw new InputError(
    [
      {
        path: '',
        expected: `a ${kind} of at most ${mebibytes(limit)}`,
        found: `${mebibytes(bytes)} (${bytes} bytes)`,
        message: `the ${kind} is ${mebibytes(bytes)} (${bytes} bytes), over the ${mebibytes(limit)} (${limit} bytes) limit for ${kind === 'partial result' ? 'partial results' : 'input files'}`,
      },
    ],
    { source },
  );
}

/** Why a file could not be read, in words. */
export function describeReadError(error: unknown): string {
  const code = (error as { code?: string }).code;
  switch (code) {
    case 'ENOENT':
      return 'no such file';
    case 'EISDIR':
      return 'it is a directory';
    case 'EACCES':
    case 'EPERM':
      return 'permission denied';
    case 'ELOOP':
      return 'a loop of symbolic links';
    case 'ENAMETOOLONG':
      return 'the name is too long';
    case 'ENOTDIR':
      return 'a part of the path is not a directory';
    default:
      return error instanceof Error ? error.message.split('\n')[0] : String(error);
  }
}

/**
 * Reads the file at `path` as JSON (Node only): its size checked before it is read, a syntax error
 * reported at its line and column. Every problem is an InputError naming the file.
 */
export async function readInputFile(path: string, kind: InputFileKind): Promise<unknown> {
  const { open } = await import('node:fs/promises');
  const cannot = (error: unknown) =>
    new InputError([{ path: '', expected: `a readable ${kind}`, found: 'an unreadable file', message: `cannot read the file (${describeReadError(error)})` }], {
      source: path,
    });
  let text: string;
  let handle: Awaited<ReturnType<typeof open>> | undefined;
  try {
    handle = await open(path, 'r');
    const info = await handle.stat();
    if (info.isDirectory()) throw Object.assign(new Error('it is a directory'), { code: 'EISDIR' });
    // a regular file's size is known before reading; a pipe or device is read up to the limit
    if (info.isFile()) checkInputSize(info.size, path, kind);
    text = await readLimited(handle, info.isFile() ? info.size : undefined, path, kind);
  } catch (error) {
    if (error instanceof InputError) throw error;
    throw cannot(error);
  } finally {
    await handle?.close().catch(() => undefined);
  }
  return parseJson(text, path);
}

// Reads at most the limit + 1 bytes, so a file that grows, or a stream, is refused
// too rather than read without end.
async function readLimited(handle: { read: (buffer: Uint8Array, offset: number, length: number, position: null) => Promise<{ bytesRead: number }> }, size: number | undefined, path: string, kind: InputFileKind): Promise<string> {
  const limit = inputSizeLimit(kind) + 1;
  let buffer = new Uint8Array(Math.min(limit, Math.max(size ?? 0, 64 * 1024) + 1));
  let length = 0;
  for (;;) {
    if (length === buffer.length) {
      if (buffer.length >= limit) break;
      const grown = new Uint8Array(Math.min(limit, buffer.length * 2));
      grown.set(buffer);
      buffer = grown;
    }
    const { bytesRead } = await handle.read(buffer, length, buffer.length - length, null);
    if (bytesRead === 0) break;
    length += bytesRead;
  }
  checkInputSize(length, path, kind);
  return new TextDecoder('utf-8').decode(buffer.subarray(0, length));
}
