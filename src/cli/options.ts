// The number options every command parses the same way: the value checked for syntax and range
// here, each refusal naming the option, what it expects and what was typed.

import { InputError, describeFound } from '../core/errors.js';

/** An integer option in [low, high] (high: no limit when undefined), or undefined when absent. */
export function parseIntegerOption(
  value: string | boolean | undefined,
  flag: string,
  low: number,
  high: number | undefined,
  source: string,
): number | undefined {
  if (value === undefined) return undefined;
  const n = typeof value === 'string' && /^\s*\+?\d+\s*$/.test(value) ? Number(value) : NaN;
  if (!(Number.isSafeInteger(n) && n >= low && (high === undefined || n <= high))) {
    const range = high === undefined ? (low === 1 ? 'a positive integer' : `an integer >= ${low}`) : `an integer from ${low} to ${high}`;
    throw new InputError([{ path: flag, expected: range, found: describeFound(value) }], { source });
  }
  return n;
}

/** A finite number option passing `ok`, or undefined when absent. */
export function parseNumberOption(
  value: string | boolean | undefined,
  flag: string,
  expected: string,
  source: string,
  ok: (v: number) => boolean = () => true,
): number | undefined {
  if (value === undefined) return undefined;
  const n = typeof value === 'string' && value.trim() !== '' ? Number(value) : NaN;
  if (!(Number.isFinite(n) && ok(n))) throw new InputError([{ path: flag, expected, found: describeFound(value) }], { source });
  return n;
}
