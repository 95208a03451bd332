// The CLI's `--plot FILE.svg`: checked before any work is done, written once the result exists.
// Node only (file system); Node modules are loaded on call, so importing this file anywhere is
// harmless.

import { InputError, describeFound } from '../errors.js';

/** The option as the commands declare it (a src/cli/main.ts OptionSpec). */
export const PLOT_OPTION = {
  type: 'string' as const,
  valueName: 'FILE.svg',
  description: 'also draw the result as a figure: an SVG file of 1280 x 800 px',
};

const issue = (expected: string, found: string, message?: string) =>
  new InputError([{ path: '--plot', expected, found, ...(message ? { message } : {}) }]);

/**
 * The `--plot` value checked: a file name ending in .svg whose directory exists, not a directory
 * itself, not the --out file, and no --shard (a shard holds part of a result; plot the merge).
 * Undefined when the option is absent.
 */
export async function plotOption(
  value: string | boolean | undefined,
  context: { shard?: boolean; out?: string } = {},
): Promise<string | undefined> {
  if (value === undefined) return undefined;
  if (typeof value !== 'string' || value.trim() === '') throw issue('a file name ending in .svg', describeFound(value));
  if (context.shard) {
    throw issue(
      'no --plot with --shard (a shard holds part of the result: plot the merged one, pronk merge FILES... --plot FILE.svg)',
      describeFound(value),
    );
  }
  if (!/\.svg$/i.test(value)) throw issue('a file name ending in .svg', describeFound(value));
  const { resolve, dirname } = await import('node:path');
  if (context.out !== undefined && resolve(context.out) === resolve(value)) {
    throw issue('a file other than the --out file', describeFound(value));
  }
  const { stat } = await import('node:fs/promises');
  const kind = async (path: string) => {
    try {
      return (await stat(path)).isDirectory() ? 'directory' : 'file';
    } catch {
      return 'missing';
    }
  };
  if ((await kind(resolve(value))) === 'directory') {
    throw issue('a file name ending in .svg', describeFound(value), `cannot write ${JSON.stringify(value)} (it is a directory)`);
  }
  const directory = dirname(resolve(value));
  if ((await kind(directory)) !== 'directory') {
    throw issue('a file in an existing directory', describeFound(value), `cannot write ${JSON.stringify(value)} (no such directory: ${directory})`);
  }
  return value;
}

/**
 * Draws the figure of `command`'s result into `file` (SVG, 1280 × 800) and says where on stderr
 * (as `source`, default `pronk COMMAND`).
 * An unwritable file is an InputError naming --plot.
 */
export async function writePlot(
  stderr: { write(chunk: string): unknown },
  command: string,
  file: string,
  result: unknown,
  source = `pronk ${command}`,
): Promise<void> {
  const { figureForCommand } = await import('./index.js');
  const { renderSvg } = await import('./svg.js');
  const svg = renderSvg(figureForCommand(command, result));
  const { writeFile } = await import('node:fs/promises');
  try {
    await writeFile(file, svg, 'utf8');
  } catch (error) {
    const code = (error as { code?: string }).code;
    const why =
      code === 'ENOENT' ? 'no such directory' : code === 'EISDIR' ? 'it is a directory' : code === 'EACCES' || code === 'EPERM' ? 'permission denied' : error instanceof Error ? error.message : String(error);
    throw issue('a writable file', describeFound(file), `cannot write ${JSON.stringify(file)} (${why})`);
  }
  stderr.write(`${source}: figure written to ${file}\n`);
}
