// Interval estimates for proportions against the formula computed independently here and against
// published worked examples.
import { describe, expect, it } from 'vitest';
import { InputError } from '../src/core/errors.js';
import { Z_95, newcombeDifferenceInterval, wilsonInterval } from '../src/core/stats.js';

// Wilson 1927 (J. Am. Stat. Assoc. 22:209–212), written out the textbook way, as the root pair of
// the quadratic (p̂ − p)² = z² p (1 − p) / n in p (law / closed form: inverting the score test).
function wilsonByQuadratic(k: number, n: number, z: number): [number, number] {
  const p = k / n;
  const a = 1 + (z * z) / n;
  const b = -(2 * p + (z * z) / n);
  const c = p * p;
  // b < 0: the cancellation-free pair q / a and c / q (common practice for quadratic roots)
  const q = (-b + Math.sqrt(b * b - 4 * a * c)) / 2;
  return [c / q, q / a];
}

describe('wilsonInterval', () => {
  it('z = 1.959963984540054 is Φ⁻¹(0.975) (law: Φ(z) by Simpson quadrature of the normal density)', () => {
    // Φ(z) − 1/2 = ∫_0^z φ; composite Simpson with 2000 panels is accurate far beyond 1e-12 here
    const phi = (x: number) => Math.exp((-x * x) / 2) / Math.sqrt(2 * Math.PI);
    const panels = 2000;
    const h = Z_95 / panels;
    let sum = phi(0) + phi(Z_95);
    for (let i = 1; i < panels; i++) sum += (i % 2 ? 4 : 2) * phi(i * h);
    expect(0.5 + (sum * h) / 3).toBeCloseTo(0.975, 12);
  });

  it('matches the quadratic-root form of the score interval for many (k, n)', () => {
    for (const n of [1, 2, 3, 7, 20, 29, 100, 263, 1000, 123457]) {
      for (const k of new Set([0, 1, Math.floor(n / 3), Math.floor(n / 2), n - 1, n].filter((k) => k >= 0 && k <= n))) {
        const [lo, hi] = wilsonInterval(k, n);
        const [qlo, qhi] = wilsonByQuadratic(k, n, Z_95);
        // 1e-10: the quadratic's discriminant b² − 4ac loses digits to cancellation near p̂ = 1 at n ~ 1e5
        expect(Math.abs(lo - Math.max(0, qlo))).toBeLessThan(1e-10);
        expect(Math.abs(hi - Math.min(1, qhi))).toBeLessThan(1e-10);
        expect(lo).toBeLessThanOrEqual(k / n); // law: the score interval contains the estimate
        expect(hi).toBeGreaterThanOrEqual(k / n);
      }
    }
  });

  it.each<[number, number, number, number]>([
    // published: Newcombe 1998, "Two-sided confidence intervals for the single proportion:
    // comparison of seven methods", Stat. Med. 17:857–872, Table I, method 3 (Wilson score);
    // digits as quoted in the project brief, each confirmed here against the formula above
    [81, 263, 0.2553, 0.3662],
    [15, 148, 0.0624, 0.1605],
    [0, 20, 0, 0.1611],
    [1, 29, 0.0061, 0.1718],
  ])('%i/%i: 95 %% interval %f to %f (Newcombe 1998, Table I)', (k, n, lo, hi) => {
    const [l, h] = wilsonInterval(k, n);
    expect(l).toBeCloseTo(lo, 4);
    expect(h).toBeCloseTo(hi, 4);
  });

  it('0 and n successes give exactly 0 and 1 at the ends (law: p̂ = 0 or 1 is a root)', () => {
    expect(wilsonInterval(0, 50)[0]).toBe(0);
    expect(wilsonInterval(50, 50)[1]).toBe(1);
    // closed form at k = n: lo = n / (n + z²)
    expect(wilsonInterval(50, 50)[0]).toBeCloseTo(50 / (50 + Z_95 * Z_95), 14);
    // law: the interval of n − k failures mirrors that of k successes
    const [lo, hi] = wilsonInterval(7, 40);
    const [mlo, mhi] = wilsonInterval(33, 40);
    expect(mlo).toBeCloseTo(1 - hi, 14);
    expect(mhi).toBeCloseTo(1 - lo, 14);
  });

  it('a larger z gives a wider interval (law: the score test at a lower significance level)', () => {
    const [lo95, hi95] = wilsonInterval(30, 100);
    const [lo99, hi99] = wilsonInterval(30, 100, 2.5758293035489004); // Φ⁻¹(0.995), common practice
    expect(lo99).toBeLessThan(lo95);
    expect(hi99).toBeGreaterThan(hi95);
  });

  it.each<[number, number, string]>([
    [0, 0, 'n'],
    [1, -3, 'n'],
    [1.5, 10, 'successes'],
    [11, 10, 'successes'],
    [-1, 10, 'successes'],
    [NaN, 10, 'successes'],
    [3, 2.5, 'n'],
  ])('wilsonInterval(%d, %d) throws an InputError naming %s', (k, n, name) => {
    expect(() => wilsonInterval(k, n)).toThrow(InputError);
    try {
      wilsonInterval(k, n);
    } catch (error) {
      expect((error as InputError).issues[0].path).toBe(name);
    }
  });

  it('a non-positive z is refused', () => {
    expect(() => wilsonInterval(1, 2, 0)).toThrow(InputError);
    expect(() => wilsonInterval(1, 2, Infinity)).toThrow(InputError);
  });
});

describe('newcombeDifferenceInterval (Newcombe 1998 method 10)', () => {
  it.each<[number, number, number, number, number, number]>([
    // published: Newcombe 1998, "Interval estimation for the difference between independent
    // proportions: comparison of eleven methods", Stat. Med. 17:873–890, Table II, method 10.
    // From memory; every pair agrees with the formula to the 4 digits quoted.
    [56, 70, 48, 80, 0.0524, 0.3339],
    [9, 10, 3, 10, 0.1705, 0.809],
    [6, 7, 2, 7, 0.0582, 0.8062],
    [5, 56, 0, 29, -0.0381, 0.1926],
    [0, 10, 0, 20, -0.1611, 0.2775],
    [10, 10, 0, 20, 0.6791, 1],
  ])('%i/%i − %i/%i: %f to %f', (a, n1, b, n2, lo, hi) => {
    const [l, h] = newcombeDifferenceInterval(a, n1, b, n2);
    expect(l).toBeCloseTo(lo, 4);
    expect(h).toBeCloseTo(hi, 4);
  });

  it('is built from the two Wilson intervals as in the paper (law: the square-and-add construction)', () => {
    const [l1, u1] = wilsonInterval(40, 90);
    const [l2, u2] = wilsonInterval(25, 80);
    const d = 40 / 90 - 25 / 80;
    const [lo, hi] = newcombeDifferenceInterval(40, 90, 25, 80);
    expect(lo).toBeCloseTo(d - Math.hypot(40 / 90 - l1, u2 - 25 / 80), 14);
    expect(hi).toBeCloseTo(d + Math.hypot(u1 - 40 / 90, 25 / 80 - l2), 14);
    // law: swapping the groups negates the interval
    const [slo, shi] = newcombeDifferenceInterval(25, 80, 40, 90);
    expect(slo).toBeCloseTo(-hi, 14);
    expect(shi).toBeCloseTo(-lo, 14);
  });

  it('bad counts name the argument', () => {
    expect(() => newcombeDifferenceInterval(1, 0, 1, 2)).toThrow(/n1/);
    expect(() => newcombeDifferenceInterval(1, 2, 3, 2)).toThrow(/successes2/);
  });
});
