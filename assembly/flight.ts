// Flight: ballistic in closed form; touchdown is the first time t after the apex
// with  y(t) - ground - L0 sin(attack(t)) = 0,  y(t) = ya - g t^2 / 2.
//
// For a fixed angle that is a square root. For a scheduled angle (retraction,
// time table) the schedule is piecewise linear in t, so on each piece
//   f''(t) = -g + L0 w^2 sin(attack(t)),   w = the piece's angle rate,
// and f is concave wherever L0 w^2 <= g. A concave f that is positive at the
// start of a piece and positive at its end is positive in between, so the
// endpoint signs find the first crossing exactly, grazing touchdowns included.
// Faster pieces are marched with steps that provably skip no root. While the
// commanded angle is an attack angle, a in (0, 90 deg], the leg term
// -L0 sin(a(t)) is convex on each piece (its second derivative is
// L0 w^2 sin(a) >= 0), so f'' >= -g there whatever the rate, and from a point t
// with f > 0
//   f(t + s) >= f(t) + f'(t) s - g s^2 / 2 > 0   for s below the positive root
// of that parabola. The march takes exactly that step (at least ~100 ulp of the
// search window, so it ends): towards a crossing it closes in like Newton's
// method from the safe side, past a near-graze it halves its distance to the
// minimum each step, so a few dozen steps do (a cap turns anything else into a
// status). The first sample with f <= 0 brackets the first crossing, which is
// then polished with Brent's method (Brent 1973, "Algorithms for Minimization
// without Derivatives", ch. 4, zeroin); a crossing on a concave piece is found by
// Newton's method from the safe side (concaveRoot), with Brent's as its fallback.
//
// A commanded angle is an attack angle only in (0, 90 deg]: a retraction
// without a clamp leaves that range at a known time, and the search stops
// there (TOUCHDOWN_ANGLE_LEFT: no touchdown while the leg could be placed).

import { attackAt, nextAngleBreakpoint, angleExitTime, angleRateAt, maxAngleRate, mget } from "./policy";
import { M_ANGLE_KIND, ANGLE_FIXED } from "./layout";

export const TOUCHDOWN_NOT_PLACEABLE: f64 = -1.0; // apex too low for the leg
export const TOUCHDOWN_GROUND_FIRST: f64 = -2.0; // the body reaches the ground first
export const TOUCHDOWN_ANGLE_LEFT: f64 = -3.0; // the commanded angle left (0, 90 deg] before touchdown
export const TOUCHDOWN_SEARCH_LIMIT: f64 = -4.0; // the march took MAX_MARCH_STEPS without deciding

// A march needs a few dozen steps per piece (see above); this cap turns a
// schedule that would need more into a status instead of a long loop.
const MAX_MARCH_STEPS: i32 = 100000;
// The march's minimum step, relative to the search window (about 100 ulp).
const MIN_STEP_FRACTION: f64 = 2.220446049250313e-14;

const HALF_PI: f64 = 1.5707963267948966;

// sin and cos of a leg angle, exact at 90 degrees so that a vertical leg has
// no horizontal component at all (cos(pi/2) is 6e-17 in floating point).
// The sine and cosine of the last angle asked are kept: a fixed attack angle asks the same one
// at every stride (the touchdown time, then the foot), on every lane.
let sinAngle: f64 = NaN;
let sinValue: f64 = 0.0;
let cosAngle: f64 = NaN;
let cosValue: f64 = 0.0;
@inline export function legSin(a: f64): f64 {
  if (Math.abs(a - HALF_PI) < 1e-15) return 1.0;
  if (a != sinAngle) {
    sinAngle = a;
    sinValue = Math.sin(a);
  }
  return sinValue;
}
@inline export function legCos(a: f64): f64 {
  if (Math.abs(a - HALF_PI) < 1e-15) return 0.0;
  if (a != cosAngle) {
    cosAngle = a;
    cosValue = Math.cos(a);
  }
  return cosValue;
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

// The root of f on [a, b], f(a) > 0 >= f(b), on a piece where the angle rate is w and
// L0 w^2 <= g, so that f is concave there: the tangent lies above f, so from any point of the
// piece where f decreases Newton's method lands at or right of the root, and from there on it
// closes in from the right, quadratically. Each iterate costs
// one sine and cosine of the same angle (f and f' together). Brent's method takes over on the
// bracket found so far if an iterate leaves it, the slope is not negative, or 8 iterates do not
// settle to Brent's tolerance.
let startAngle: f64 = NaN;
let startSin: f64 = 0.0;
let startCos: f64 = 0.0;
function concaveRoot(model: usize, a0: f64, b0: f64, fa0: f64, fb0: f64, ya: f64, ground: f64, leg: f64, g: f64, w: f64): f64 {
  let a = a0, b = b0, fa = fa0, fb = fb0;
  // the first iterate: the root of f's second-order Taylor polynomial at a (its error is third
  // order in the distance, so Newton needs two or three more); the chord's root if that fails
  const angleA = attackAt(model, a);
  let t: f64 = NaN;
  if (Math.abs(angleA - HALF_PI) >= 1e-15) {
    // the angle at the piece's start is the same at every stride from the apex (kept)
    if (angleA != startAngle) {
      startAngle = angleA;
      NativeMath.sincos(angleA);
      startSin = NativeMath.sincos_sin;
      startCos = NativeMath.sincos_cos;
    }
    const d1 = -g * a - leg * w * startCos;
    const d2 = -g + leg * w * w * startSin;
    const disc = d1 * d1 - 2.0 * d2 * fa;
    if (d2 < 0.0 && disc >= 0.0) t = a + (2.0 * fa) / (Math.sqrt(disc) - d1);
  }
  if (!(t > a && t < b)) t = a - (fa * (b - a)) / (fb - fa);
  for (let it = 0; it < 8; it++) {
    if (!(t > a && t < b)) break;
    const angle = attackAt(model, t);
    let sn: f64, cs: f64;
    if (Math.abs(angle - HALF_PI) < 1e-15) { sn = 1.0; cs = 0.0; } // legSin, legCos
    else { NativeMath.sincos(angle); sn = NativeMath.sincos_sin; cs = NativeMath.sincos_cos; }
    const f = ya - 0.5 * g * t * t - ground - leg * sn;
    if (f > 0.0) { a = t; fa = f; } else { b = t; fb = f; }
    if (f == 0.0) return t;
    const slope = -g * t - leg * w * cs;
    if (!(slope < 0.0)) break;
    const shift = f / slope;
    const next = t - shift;
    const settled = 4.440892098500626e-16 * Math.abs(t) + 1e-16;
    if (Math.abs(shift) <= settled) return next;
    // Newton's next correction, about |f''| shift^2 / (2 |f'|) with f'' = -g + L0 w^2 sin, taken
    // four times over, is already below that: `next` is the root to the same tolerance
    if (next > a && next < b && 2.0 * Math.abs(-g + leg * w * w * sn) * shift * shift <= settled * Math.abs(slope)) return next;
    t = next;
  }
  return brent(model, a, b, fa, fb, ya, ground, leg, g);
}

// Time from the apex to touchdown, or TOUCHDOWN_NOT_PLACEABLE / TOUCHDOWN_GROUND_FIRST /
// TOUCHDOWN_ANGLE_LEFT / TOUCHDOWN_SEARCH_LIMIT. A root found here past the angle's exit time
// (concave schedules search to the ground) is reported by the caller from the attack angle.
export function touchdownTime(model: usize, ya: f64, ground: f64, leg: f64, g: f64): f64 {
  if (<i32>mget(model, M_ANGLE_KIND) == ANGLE_FIXED) {
    const f0 = gap(model, 0.0, ya, ground, leg, g);
    if (!(f0 > 0.0)) return TOUCHDOWN_NOT_PLACEABLE;
    return Math.sqrt((2.0 * f0) / g);
  }
  const f0 = gap(model, 0.0, ya, ground, leg, g);
  if (!(f0 > 0.0)) return TOUCHDOWN_NOT_PLACEABLE;
  const tEnd = Math.sqrt((2.0 * (ya - ground)) / g); // body at ground level
  const tExit = angleExitTime(model);
  const noRoot = tExit < tEnd ? TOUCHDOWN_ANGLE_LEFT : TOUCHDOWN_GROUND_FIRST;
  const w = maxAngleRate(model);
  if (!(leg * w * w <= g)) return march(model, f0, ya, ground, leg, g, tExit < tEnd ? tExit : tEnd, noRoot);
  let a: f64 = 0.0;
  let fa = f0;
  for (;;) {
    let b = nextAngleBreakpoint(model, a);
    if (b > tEnd) b = tEnd;
    const fb = gap(model, b, ya, ground, leg, g);
    if (fb <= 0.0) return concaveRoot(model, a, b, fa, fb, ya, ground, leg, g, angleRateAt(model, 0.5 * (a + b)));
    a = b;
    fa = fb;
    if (b >= tEnd) break;
  }
  return noRoot;
}

// The first root on [0, tStop] when some piece is not concave: concave pieces by their ends,
// the others by the guaranteed steps of the file comment.
function march(model: usize, f0: f64, ya: f64, ground: f64, leg: f64, g: f64, tStop: f64, noRoot: f64): f64 {
  const minStep = MIN_STEP_FRACTION * tStop;
  let t: f64 = 0.0;
  let ft = f0;
  let steps = 0;
  for (;;) {
    let b = nextAngleBreakpoint(model, t);
    if (b > tStop) b = tStop;
    const w = angleRateAt(model, 0.5 * (t + b));
    if (leg * w * w <= g) {
      const fb = gap(model, b, ya, ground, leg, g);
      if (fb <= 0.0) return concaveRoot(model, t, b, ft, fb, ya, ground, leg, g, w);
      t = b;
      ft = fb;
    } else {
      while (t < b) {
        if (++steps > MAX_MARCH_STEPS) return TOUCHDOWN_SEARCH_LIMIT;
        const slope = -g * t - leg * w * legCos(attackAt(model, t)); // f'(t) on this piece
        const root = Math.sqrt(slope * slope + 2.0 * g * ft);
        // positive root of ft + slope s - g s^2 / 2, in the form without cancellation
        let h = slope > 0.0 ? (slope + root) / g : (2.0 * ft) / (root - slope);
        if (h < minStep) h = minStep;
        const tb = t + h < b ? t + h : b;
        const fb = gap(model, tb, ya, ground, leg, g);
        if (fb <= 0.0) return brent(model, t, tb, ft, fb, ya, ground, leg, g);
        t = tb;
        ft = fb;
      }
    }
    if (b >= tStop) break;
  }
  return noRoot;
}
