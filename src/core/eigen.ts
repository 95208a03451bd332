// Eigenvalues of a small real square matrix (the stride maps' Jacobians, n <= 8).
//
// The characteristic polynomial by the Faddeev–LeVerrier recursion (M_k = A M_{k-1} + c_{k-1} I,
// c_k = -tr(A M_k)/k; Householder, The Theory of Matrices in Numerical Analysis, 1964, §6.7), its
// roots by the Aberth–Ehrlich simultaneous iteration (Aberth, Math. Comp. 27:339–344, 1973) in
// complex arithmetic. For n <= 8 and entries of order one the coefficients lose a few digits at
// most; a double root comes out to about the square root of the coefficients' error (1e-8), far
// inside the 1e-6 the stride-map checks ask for.

export interface Complex {
  re: number;
  im: number;
}

/** Coefficients [1, c1, ..., cn] of det(x I - A) = x^n + c1 x^(n-1) + ... + cn. */
export function characteristicPolynomial(a: readonly (readonly number[])[]): number[] {
  const n = a.length;
  for (const row of a) if (row.length !== n) throw new Error(`eigenvalues: the matrix is not square (${n} rows, a row of ${row.length})`);
  const c = [1];
  let m: number[][] = Array.from({ length: n }, () => new Array(n).fill(0)); // M_0 = 0
  for (let k = 1; k <= n; k++) {
    // M_k = A M_{k-1} + c_{k-1} I
    const next: number[][] = Array.from({ length: n }, () => new Array(n).fill(0));
    for (let i = 0; i < n; i++) {
      for (let j = 0; j < n; j++) {
        let s = 0;
        for (let l = 0; l < n; l++) s += a[i][l] * m[l][j];
        next[i][j] = s + (i === j ? c[k - 1] : 0);
      }
    }
    m = next;
    let trace = 0;
    for (let i = 0; i < n; i++) for (let l = 0; l < n; l++) trace += a[i][l] * m[l][i];
    c.push(-trace / k);
  }
  return c;
}

/** Roots of x^n + c1 x^(n-1) + ... + cn (coefficients as characteristicPolynomial returns them). */
export function polynomialRoots(coefficients: readonly number[]): Complex[] {
  const n = coefficients.length - 1;
  if (n < 1) return [];
  // starting points on a circle of the Cauchy bound's radius, off the real axis
  let bound = 0;
  for (let k = 1; k <= n; k++) bound = Math.max(bound, Math.abs(coefficients[k]));
  const radius = 1 + bound;
  const z: Complex[] = [];
  for (let k = 0; k < n; k++) {
    const angle = (2 * Math.PI * k) / n + 0.4;
    z.push({ re: 0.5 * radius * Math.cos(angle), im: 0.5 * radius * Math.sin(angle) });
  }
  for (let iteration = 0; iteration < 500; iteration++) {
    let moved = 0;
    for (let i = 0; i < n; i++) {
      // p(z) and p'(z) by Horner
      let pr = 1;
      let pi = 0;
      let dr = 0;
      let di = 0;
      const x = z[i];
      for (let k = 1; k <= n; k++) {
        const ndr = dr * x.re - di * x.im + pr;
        const ndi = dr * x.im + di * x.re + pi;
        dr = ndr;
        di = ndi;
        const npr = pr * x.re - pi * x.im + coefficients[k];
        const npi = pr * x.im + pi * x.re;
        pr = npr;
        pi = npi;
      }
      if (pr === 0 && pi === 0) continue;
      // ratio = p / p'
      const dd = dr * dr + di * di;
      if (dd === 0) continue;
      const rr = (pr * dr + pi * di) / dd;
      const ri = (pi * dr - pr * di) / dd;
      // sum over j != i of 1 / (z_i - z_j)
      let sr = 0;
      let si = 0;
      for (let j = 0; j < n; j++) {
        if (j === i) continue;
        const ur = x.re - z[j].re;
        const ui = x.im - z[j].im;
        const uu = ur * ur + ui * ui;
        if (uu === 0) continue;
        sr += ur / uu;
        si += -ui / uu;
      }
      // w = ratio / (1 - ratio * sum)
      const denR = 1 - (rr * sr - ri * si);
      const denI = -(rr * si + ri * sr);
      const den = denR * denR + denI * denI;
      if (den === 0) continue;
      const wr = (rr * denR + ri * denI) / den;
      const wi = (ri * denR - rr * denI) / den;
      z[i] = { re: x.re - wr, im: x.im - wi };
      moved = Math.max(moved, Math.hypot(wr, wi) / Math.max(1, Math.hypot(x.re, x.im)));
    }
    if (moved < 1e-15) break;
  }
  // a real polynomial's roots: clean an imaginary part at rounding level
  return z
    .map((r) => (Math.abs(r.im) <= 1e-10 * Math.max(1, Math.abs(r.re)) ? { re: r.re, im: 0 } : r))
    .sort((p, q) => Math.hypot(q.re, q.im) - Math.hypot(p.re, p.im) || q.re - p.re || q.im - p.im);
}

/** Eigenvalues of a real square matrix, largest modulus first. */
export function eigenvalues(a: readonly (readonly number[])[]): Complex[] {
  if (a.length === 0) return [];
  if (a.length === 1) return [{ re: a[0][0], im: 0 }];
  if (a.length === 2) {
    // closed form: trace / 2 +- sqrt((trace / 2)^2 - det)
    const t = 0.5 * (a[0][0] + a[1][1]);
    const det = a[0][0] * a[1][1] - a[0][1] * a[1][0];
    const disc = t * t - det;
    if (disc >= 0) {
      const s = Math.sqrt(disc);
      const big = t >= 0 ? t + s : t - s;
      const small = big !== 0 ? det / big : t - s;
      return [{ re: big, im: 0 }, { re: small, im: 0 }].sort((p, q) => Math.abs(q.re) - Math.abs(p.re));
    }
    const s = Math.sqrt(-disc);
    return [
      { re: t, im: s },
      { re: t, im: -s },
    ];
  }
  return polynomialRoots(characteristicPolynomial(a));
}

export function modulus(z: Complex): number {
  return Math.hypot(z.re, z.im);
}

/** An eigenvalue with its modulus: below 1 the direction contracts. */
export interface Eigenvalue extends Complex {
  modulus: number;
}

/** Eigenvalues of a real square matrix with their moduli, largest modulus first. */
export function eigenvaluesWithModulus(a: readonly (readonly number[])[]): Eigenvalue[] {
  return eigenvalues(a).map((z) => ({ re: z.re, im: z.im, modulus: modulus(z) }));
}
