// Eigenvalues of small real matrices (the Jacobians of return maps): 1x1, 2x2 and 3x3, from the
// characteristic polynomial. 2x2: the quadratic formula in the form without cancellation. 3x3:
// one real root of the cubic (there always is one) by Newton's method from a bracket, polished,
// then the quadratic left after deflation (Press et al., Numerical Recipes, 3rd ed., §5.6 for the
// stable quadratic). Accurate to a few ulp of the matrix norm for the well-separated roots of a
// return map's Jacobian; repeated roots lose half the digits, as any method does.

export interface Eigenvalue {
  re: number;
  im: number;
  /** |lambda|: below 1 the direction contracts. */
  modulus: number;
}

function value(re: number, im = 0): Eigenvalue {
  return { re, im, modulus: Math.hypot(re, im) };
}

/** Roots of x^2 + b x + c = 0, the larger modulus first for real pairs. */
function quadraticRoots(b: number, c: number): Eigenvalue[] {
  const disc = b * b - 4 * c;
  if (disc >= 0) {
    const q = -0.5 * (b + Math.sign(b || 1) * Math.sqrt(disc));
    const r1 = q;
    const r2 = q !== 0 ? c / q : 0;
    return Math.abs(r1) >= Math.abs(r2) ? [value(r1), value(r2)] : [value(r2), value(r1)];
  }
  const re = -b / 2;
  const im = Math.sqrt(-disc) / 2;
  return [value(re, im), value(re, -im)];
}

/** Eigenvalues of a real n x n matrix (n = 1, 2 or 3), given row by row. */
export function eigenvalues(a: readonly (readonly number[])[]): Eigenvalue[] {
  const n = a.length;
  if (n === 1) return [value(a[0][0])];
  if (n === 2) {
    const tr = a[0][0] + a[1][1];
    const det = a[0][0] * a[1][1] - a[0][1] * a[1][0];
    return quadraticRoots(-tr, det);
  }
  if (n !== 3) throw new Error(`eigenvalues: a ${n}x${n} matrix (only 1 to 3 supported)`);
  // det(lambda I - A) = lambda^3 + p lambda^2 + q lambda + r
  const tr = a[0][0] + a[1][1] + a[2][2];
  const minors =
    a[0][0] * a[1][1] - a[0][1] * a[1][0] + a[0][0] * a[2][2] - a[0][2] * a[2][0] + a[1][1] * a[2][2] - a[1][2] * a[2][1];
  const det =
    a[0][0] * (a[1][1] * a[2][2] - a[1][2] * a[2][1]) -
    a[0][1] * (a[1][0] * a[2][2] - a[1][2] * a[2][0]) +
    a[0][2] * (a[1][0] * a[2][1] - a[1][1] * a[2][0]);
  const p = -tr;
  const q = minors;
  const r = -det;
  const f = (x: number) => ((x + p) * x + q) * x + r;
  const df = (x: number) => (3 * x + 2 * p) * x + q;
  // Cauchy's bound: every root lies in |x| <= 1 + max(|p|, |q|, |r|)
  const bound = 1 + Math.max(Math.abs(p), Math.abs(q), Math.abs(r));
  let lo = -bound;
  let hi = bound; // f(lo) < 0 < f(hi)
  let x = 0;
  for (let it = 0; it < 200; it++) {
    x = 0.5 * (lo + hi);
    if (f(x) < 0) lo = x;
    else hi = x;
    if (hi - lo <= 1e-3 * bound) break;
  }
  for (let it = 0; it < 60; it++) {
    const fx = f(x);
    if (fx === 0) break;
    if (fx < 0) lo = x;
    else hi = x;
    const d = df(x);
    let next = d !== 0 ? x - fx / d : Number.NaN;
    if (!(next > lo && next < hi)) next = 0.5 * (lo + hi);
    if (Math.abs(next - x) <= 1e-16 * Math.max(1, Math.abs(x))) {
      x = next;
      break;
    }
    x = next;
  }
  // deflate: lambda^3 + p lambda^2 + q lambda + r = (lambda - x)(lambda^2 + b lambda + c)
  const b = p + x;
  const c = Math.abs(x) > 1e-300 && Math.abs(r) > Math.abs(q + b * x) ? -r / x : q + b * x;
  const roots = [value(x), ...quadraticRoots(b, c)];
  return roots.sort((u, v) => v.modulus - u.modulus);
}
