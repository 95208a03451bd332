// Flight: ballistic in closed form; touchdown is the first time t after the apex
// with  y(t) - ground - L0 sin(attack(t)) = 0,  y(t) = ya - g t^2 / 2.
//
// For a fixed angle that is a square root. For a scheduled angle (retraction,
// time table) the schedule is piecewise linear in t, so on each piece
//   f''(t) = -g + L0 w^2 sin(attack(t)),   w = the piece's angle rate,
// and f is concave wherever L0 w^2 <= g. A concave f that is positive at the
// start of a piece and positive at its end is positive in between, so the
// endpoint signs find the first crossing exactly, grazing touchdowns included;
// only faster schedules fall back to sampling each piece finely. The crossing
// is then polished with Brent's method (Brent 1973, "Algorithms for
// Minimization without Derivatives", ch. 4, zeroin).

import { attackAt, angleBreakpoints, maxAngleRate, mget } from "./policy";
import { M_ANGLE_KIND, ANGLE_FIXED } from "./layout";

export const TOUCHDOWN_NOT_PLACEABLE: f64 = -1.0; // apex too low for the leg
export const TOUCHDOWN_GROUND_FIRST: f64 = -2.0; // the body reaches the ground first

const HALF_PI: f64 = 1.5707963267948966;
const BREAKS: usize = memory.data(8 * 512, 16); // (512) f64 schedule breakpoints, scratch
const MAX_BREAKS: i32 = 510;

// sin and cos of a leg angle, exact at 90 degrees so that a vertical leg has
// no horizontal component at all (cos(pi/2) is 6e-17 in floating point).
@inline export function legSin(a: f64): f64 {
  return Math.abs(a - HALF_PI) < 1e-15 ? 1.0 : Math.sin(a);
}
@inline export function legCos(a: f64): f64 {
  return Math.abs(a - HALF_PI) < 1e-15 ? 0.0 : Math.cos(a);
}

@inline function gap(model: usize, t: f64, ya: f64, ground: f64, leg: f64, g: f64): f64 {
  return ya - 0.5 * g * t * t - ground - leg * legSin(attackAt(model, t));
}

// Brent's zeroin on [a, b] with f(a) > 0 >= f(b).
function brent(model: usize, a0: f64, b0: f64, fa0: f64, fb0: f64, ya: f64, ground: f64, leg: f64, g: f64): f64 {
  let a = a0, b = b0, fa = fa0, fb = fb0;
  let c = a, fc = fa;
  let d = b - a, e = d;
  for (let it = 0; it < 200; it++) {
    if ((fb > 0.0 && fc > 0.0) || (fb < 0.0 && fc < 0.0)) {
      c = a; fc = fa; d = b - a; e = d;
    }
    if (Math.abs(fc) < Math.abs(fb)) {
      a = b; b = c; c = a;
      fa = fb; fb = fc; fc = fa;
    }
    const tol = 4.440892098500626e-16 * Math.abs(b) + 1e-16;
    const m = 0.5 * (c - b);
    if (Math.abs(m) <= tol || fb == 0.0) return b;
    if (Math.abs(e) >= tol && Math.abs(fa) > Math.abs(fb)) {
      let p: f64, q: f64, r: f64;
      const s = fb / fa;
      if (a == c) {
        p = 2.0 * m * s;
        q = 1.0 - s;
      } else {
        const qq = fa / fc;
        r = fb / fc;
        p = s * (2.0 * m * qq * (qq - r) - (b - a) * (r - 1.0));
        q = (qq - 1.0) * (r - 1.0) * (s - 1.0);
      }
      if (p > 0.0) q = -q;
      else p = -p;
      if (2.0 * p < 3.0 * m * q - Math.abs(tol * q) && p < Math.abs(0.5 * e * q)) {
        e = d;
        d = p / q;
      } else {
        d = m; e = m;
      }
    } else {
      d = m; e = m;
    }
    a = b; fa = fb;
    b += Math.abs(d) > tol ? d : (m > 0.0 ? tol : -tol);
    fb = gap(model, b, ya, ground, leg, g);
  }
  return b;
}

// Time from the apex to touchdown, or TOUCHDOWN_NOT_PLACEABLE / TOUCHDOWN_GROUND_FIRST.
export function touchdownTime(model: usize, ya: f64, ground: f64, leg: f64, g: f64): f64 {
  if (<i32>mget(model, M_ANGLE_KIND) == ANGLE_FIXED) {
    const f0 = gap(model, 0.0, ya, ground, leg, g);
    if (!(f0 > 0.0)) return TOUCHDOWN_NOT_PLACEABLE;
    return Math.sqrt((2.0 * f0) / g);
  }
  const f0 = gap(model, 0.0, ya, ground, leg, g);
  if (!(f0 > 0.0)) return TOUCHDOWN_NOT_PLACEABLE;
  const tEnd = Math.sqrt((2.0 * (ya - ground)) / g); // body at ground level
  const w = maxAngleRate(model);
  const concave = leg * w * w <= g;
  const nb = angleBreakpoints(model, BREAKS, MAX_BREAKS);
  let a: f64 = 0.0;
  let fa = f0;
  for (let i = 0; i <= nb; i++) {
    let b = i < nb ? load<f64>(BREAKS + (<usize>i << 3)) : tEnd;
    if (b > tEnd) b = tEnd;
    if (b <= a) continue;
    const pieces = concave ? 1 : 64;
    const width = (b - a) / <f64>pieces;
    for (let j = 1; j <= pieces; j++) {
      const tb = j == pieces ? b : a + width * <f64>j;
      const fb = gap(model, tb, ya, ground, leg, g);
      if (fb <= 0.0) return brent(model, a, tb, fa, fb, ya, ground, leg, g);
      a = tb;
      fa = fb;
    }
    if (b >= tEnd) break;
  }
  return TOUCHDOWN_GROUND_FIRST;
}
