// The number options every command parses the same way: the value checked for syntax and range
// here, each refusal naming the option, what it expects and what was typed. Only plain decimal
// numbers are read (src/core/decimal.ts): `0x10`, `1_000`, ` 5` and `Infinity` are refused.

import { DECIMAL_FORM, DIGITS_FORM, decimalDigits, decimalNumber, looksNumericButNotDecimal } from '../core/decimal.js';
import { InputError, describeFound } from '../core/errors.js';

/** `expected`, with the decimal form spelled out when the value was a number in another notation. */
export function expectedDecimal(expected: string, value: unknown, integer = false): string {
  return typeof value === 'string' && looksNumericButNotDecimal(value) ? `${expected}, ${integer ? DIGITS_FORM : DECIMAL_FORM}` : expected;
}

/** An integer option in [low, high] (high: no limit when undefined), or undefined when absent. */
export function parseIntegerOption(
  value: string | boolean | undefined,
  flag: string,
  low: number,
  high: number | undefined,
  source: string,
): number | undefined {
  if (value === undefined) return undefined;
  const n = typeof value === 'string' ? decimalDigits(value) : Number.NaN;
  if (!(Number.isSafeInteger(n) && n >= low && (high === undefined || n <= high))) {
    const range = high === undefined ? (low === 1 ? 'a positive integer' : `an integer >= ${low}`) : `an integer from ${low} to ${high}`;
    throw new InputError([{ path: flag, expected: expectedDecimal(range, value, true), found: describeFound(value) }], { source });
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
  const n = typeof value === 'string' ? decimalNumber(value) : Number.NaN;
  if (!(Number.isFinite(n) && ok(n))) throw new InputError([{ path: flag, expected: expectedDecimal(expected, value), found: describeFound(value) }], { source });
  return n;
}
