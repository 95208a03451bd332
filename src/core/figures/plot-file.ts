// The CLI's `--plot FILE.svg`: the option, its name checked before any work is done, and the
// figure's SVG text once the result exists. The file itself is checked and written by the CLI
// (src/cli/output-files.ts), with every other output of the command.

import { InputError, describeFound } from '../errors.js';

/** The option as the commands declare it (a src/cli/main.ts OptionSpec). */
export const PLOT_OPTION = {
  type: 'string' as const,
  valueName: 'FILE.svg',
  description: 'also draw the result as a figure: an SVG file of 1280 x 800 px',
};

const issue = (expected: string, found: string) => new InputError([{ path: '--plot', expected, found }]);

/**
 * The `--plot` value checked: a file name ending in .svg, and no --shard (a shard holds part of a
 * result; plot the merge). Undefined when the option is absent.
 */
export async function plotOption(value: string | boolean | undefined, context: { shard?: boolean } = {}): Promise<string | undefined> {
  if (value === undefined) return undefined;
  if (typeof value !== 'string' || value.trim() === '') throw issue('a file name ending in .svg', describeFound(value));
  if (context.shard) {
    throw issue(
      'no --plot with --shard (a shard holds part of the result: plot the merged one, pronk merge FILES... --plot FILE.svg)',
      describeFound(value),
    );
  }
  if (!/\.svg$/i.test(value)) throw issue('a file name ending in .svg', describeFound(value));
  return value;
}

/** The figure of `command`'s result as SVG text (1280 x 800). */
export async function renderPlot(command: string, result: unknown): Promise<string> {
  const { figureForCommand } = await import('./index.js');
  const { renderSvg } = await import('./svg.js');
  return renderSvg(figureForCommand(command, result));
}
