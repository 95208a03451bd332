// Numbers typed by a person (command-line options and the numbers inside them, e.g. `lo:hi:n`):
// plain decimal only. JavaScript's Number() also reads hexadecimal, octal and binary (`0x10` is
// 16), surrounding blanks (` 5`), `Infinity`, and `''` as 0; none of those is what a user of a
// physics tool means, so they are refused rather than silently converted.

/** An optional sign, digits with an optional point (or a point and digits), an optional exponent. */
const DECIMAL = /^[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?$/;
/** An optional plus sign and decimal digits. */
const DIGITS = /^\+?\d+$/;

/** The forms accepted, for messages. */
export const DECIMAL_FORM = 'written in decimal, e.g. 0.25, -3 or 1e-3';
export const DIGITS_FORM = 'written in decimal digits';

/** The value of a decimal number (possibly ±Infinity past the double range), or NaN for any other form. */
export function decimalNumber(text: string): number {
  return DECIMAL.test(text) ? Number(text) : Number.NaN;
}

/** The value of a whole number in decimal digits, or NaN for any other form. */
export function decimalDigits(text: string): number {
  return DIGITS.test(text) ? Number(text) : Number.NaN;
}

/** True when `text` is not a plain decimal number but JavaScript would read it as one (hex, blanks, Infinity...). */
export function looksNumericButNotDecimal(text: string): boolean {
  return !DECIMAL.test(text) && text.trim() !== '' && !Number.isNaN(Number(text));
}
