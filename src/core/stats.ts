// Interval estimates for proportions (survival fractions of Monte Carlo runs).
//
// Wilson's score interval: E. B. Wilson 1927, "Probable inference, the law of succession, and
// statistical inference", J. Am. Stat. Assoc. 22(158):209–212. It inverts the normal score test,
// so unlike the Wald interval p ± z·sqrt(p(1 − p)/n) it stays inside [0, 1], is never empty at
// 0 or n successes, and keeps close to its nominal coverage for small n (R. G. Newcombe 1998,
// "Two-sided confidence intervals for the single proportion: comparison of seven methods",
// Stat. Med. 17:857–872, method 3).

import { InputError, describeFound } from './errors.js';

/** The standard normal quantile Φ⁻¹(0.975), for two-sided 95 % intervals (to double precision). */
export const Z_95 = 1.959963984540054;

/**
 * Wilson score interval [lo, hi] for `successes` out of `n` trials at normal quantile z
 * (default: two-sided 95 %). lo is exactly 0 at 0 successes and hi exactly 1 at n.
 */
export function wilsonInterval(successes: number, n: number, z: number = Z_95): [number, number] {
  checkCounts(successes, n, 'successes', 'n');
  if (!(Number.isFinite(z) && z > 0)) {
    throw new InputError([{ path: 'z', expected: 'a finite number > 0 (normal quantile)', found: describeFound(z) }]);
  }
  const p = successes / n;
  const z2 = z * z;
  const denominator = 1 + z2 / n;
  const centre = (p + z2 / (2 * n)) / denominator;
  const half = (z / denominator) * Math.sqrt((p * (1 - p)) / n + z2 / (4 * n * n));
  // At the ends the formula gives 0 and 1 up to rounding; return them exactly.
  const lo = successes === 0 ? 0 : Math.max(0, centre - half);
  const hi = successes === n ? 1 : Math.min(1, centre + half);
  return [lo, hi];
}

/**
 * Interval [lo, hi] for the difference p1 − p2 of two independent proportions by Newcombe's
 * hybrid score method (R. G. Newcombe 1998, "Interval estimation for the difference between
 * independent proportions: comparison of eleven methods", Stat. Med. 17:873–890, method 10),
 * built from the two Wilson intervals. With common random numbers (the same terrain streams for
 * both policies) the samples are paired and this interval is conservative.
 */
export function newcombeDifferenceInterval(
  successes1: number,
  n1: number,
  successes2: number,
  n2: number,
  z: number = Z_95,
): [number, number] {
  checkCounts(successes1, n1, 'successes1', 'n1');
  checkCounts(successes2, n2, 'successes2', 'n2');
  const p1 = successes1 / n1;
  const p2 = successes2 / n2;
  const [l1, u1] = wilsonInterval(successes1, n1, z);
  const [l2, u2] = wilsonInterval(successes2, n2, z);
  const d = p1 - p2;
  const below = Math.sqrt((p1 - l1) ** 2 + (u2 - p2) ** 2);
  const above = Math.sqrt((u1 - p1) ** 2 + (p2 - l2) ** 2);
  return [Math.max(-1, d - below), Math.min(1, d + above)];
}

function checkCounts(successes: number, n: number, successesName: string, nName: string): void {
  if (!(Number.isSafeInteger(n) && n >= 1)) {
    throw new InputError([{ path: nName, expected: 'a positive integer (number of trials)', found: describeFound(n) }]);
  }
  if (!(Number.isSafeInteger(successes) && successes >= 0 && successes <= n)) {
    throw new InputError([
      { path: successesName, expected: `an integer from 0 to ${n} (${nName})`, found: describeFound(successes) },
    ]);
  }
}
