// A reference stride of the spring-mass (SLIP) runner built on the `odex` npm
// package (C. Smith's port of E. Hairer and G. Wanner's ODEX, the
// Gragg–Bulirsch–Stoer extrapolation code of Hairer, Nørsett, Wanner, Solving
// Ordinary Differential Equations I, 2nd ed., Springer 1993, section II.9).
// It shares no code with the WASM kernel: flight and apex in closed form, the
// stance integrated by ODEX, liftoff found on ODEX's dense output and then
// polished on the true solution. Undamped, constant stiffness, flat or level
// ground under each touchdown. Plain JavaScript so that vitest and a plain
// `node` benchmark can both import it.
//
// Units SI, angles in radians from the horizontal. Stance state relative to
// the foot: (px, py) = body − foot.

import odex from 'odex';

const { Solver } = odex;

// Stance equations of motion (Newton's second law, massless linear leg spring
// along the leg, foot pinned): m px'' = F px/r, m py'' = F py/r − m g,
// F = k (L0 − r). State y = [px, py, vx, vy].
function stanceRhs(mass, leg, k, g) {
  return (_t, y) => {
    const px = y[0];
    const py = y[1];
    const r = Math.sqrt(px * px + py * py);
    const a = (k * (leg - r)) / (mass * r); // F / (m r)
    return [y[2], y[3], a * px, a * py - g];
  };
}

// Liftoff event function: leg length minus rest length (law: undamped, the
// spring force k (L0 − r) falls to zero at r = L0 and a point foot cannot pull).
function legExcess(px, py, leg) {
  return Math.sqrt(px * px + py * py) - leg;
}

// Radial rate r' = (p · v)/r, the time derivative of the event (chain rule).
function radialRate(y) {
  return (y[0] * y[2] + y[1] * y[3]) / Math.sqrt(y[0] * y[0] + y[1] * y[1]);
}

// A configured ODEX solver for the 4-dimensional stance system.
function makeSolver(rtol, atol, dense, maxStepSize) {
  const s = new Solver(4);
  s.relativeTolerance = rtol;
  s.absoluteTolerance = atol;
  s.maxSteps = 100000;
  s.denseOutput = dense;
  if (maxStepSize > 0) s.maxStepSize = maxStepSize;
  return s;
}

// Integrate the stance from t0, y0 to t1 (either direction) with ODEX, no
// events: the "short integration" used to land on the true solution.
function integrate(f, y0, t0, t1, rtol, atol) {
  if (t1 === t0) return { y: y0.slice(), evaluations: 0 };
  const s = makeSolver(rtol, atol, false, 0);
  s.initialStepSize = Math.abs(t1 - t0); // odex halves it to |t1 − t0|/2 on its own
  const res = s.solve(f, t0, y0, t1);
  if (res.outcome !== 0) throw new Error(`odex polish from t = ${t0} to ${t1} s did not converge (outcome ${res.outcome})`);
  return { y: res.y, evaluations: res.nEval };
}

// Root of g on [a, b] with g(a) < 0 <= g(b): Illinois regula falsi
// (M. Dowell, P. Jarratt, "A modified regula falsi method for computing the
// root of an equation", BIT 11:168–174, 1971), bisection when it stalls.
function illinois(gfun, a0, b0, ga0, gb0, tol) {
  let a = a0;
  let b = b0;
  let ga = ga0;
  let gb = gb0;
  if (gb === 0) return b;
  let side = 0;
  for (let it = 0; it < 200 && b - a > tol; it++) {
    let t = (a * gb - b * ga) / (gb - ga);
    if (!(t > a && t < b)) t = 0.5 * (a + b);
    const gt = gfun(t);
    if (gt >= 0) {
      b = t;
      gb = gt;
      if (side === 1) ga *= 0.5;
      side = 1;
    } else {
      a = t;
      ga = gt;
      if (side === -1) gb *= 0.5;
      side = -1;
    }
    if (gt === 0) break;
  }
  return b;
}

/**
 * Stance from touchdown to liftoff (r returns to L0 while extending).
 * Inputs: mass (kg), leg (rest length L0, m), k (N/m), g (m/s²), touchdown
 * state relative to the foot px, py (m), vx, vy (m/s), ODEX tolerances.
 * Returns the liftoff state relative to the foot, the contact time (s), and
 * ODEX's work counts. Throws when the body reaches the ground or no liftoff
 * occurs in 20 spring periods (a reference has no business being lenient).
 */
export function odexStance({ mass, leg, k, g, px, py, vx, vy, rtol, atol }) {
  const f = stanceRhs(mass, leg, k, g);
  const timeScale = Math.sqrt(mass / k); // 1/ω of the leg spring (harmonic oscillator)
  const tLimit = 20 * 2 * Math.PI * timeScale;
  // At most a quarter of the shorter of half a spring period and the time to
  // sweep the leg through its touchdown angle and back (2|px|/vx), so that no
  // single step can jump over a whole stance and hide the liftoff crossing.
  const sweep = Math.abs(vx) > 0 && Math.abs(px) > 0 ? (2 * Math.abs(px)) / Math.abs(vx) : Infinity;
  const maxStep = 0.25 * Math.min(Math.PI * timeScale, sweep);

  let prevT = 0;
  let prevY = [px, py, vx, vy];
  let prevG = legExcess(px, py, leg);
  let bracket = null; // { t0, y0, tRoot } once the crossing is located
  let hitGround = false;

  const solver = makeSolver(rtol, atol, true, maxStep);
  const res = solver.solve(f, 0, [px, py, vx, vy], tLimit, (nr, tOld, t, y, dense) => {
    if (nr === 1) return true; // the initial point, no step yet
    const g1 = legExcess(y[0], y[1], leg);
    if (y[1] <= 0) {
      hitGround = true;
      return false;
    }
    if (prevG < 0 && g1 >= 0) {
      const gOnDense = (s) => legExcess(dense(0, s), dense(1, s), leg);
      const tRoot = illinois(gOnDense, tOld, t, prevG, g1, 1e-15 * (t + timeScale));
      bracket = { t0: prevT, y0: prevY, tRoot };
      return false;
    }
    prevT = t;
    prevY = y;
    prevG = g1;
    return true;
  });
  if (hitGround) throw new Error(`odex stance: the body reached the ground (touchdown px=${px}, py=${py}, vx=${vx}, vy=${vy})`);
  if (!bracket) throw new Error(`odex stance: no liftoff within ${tLimit} s (outcome ${res.outcome})`);

  // Polish: integrate from the start of the step that holds the crossing to
  // the located time, then Newton in time (t ← t − g/g', g' = r') with a short
  // integration per iteration, so the liftoff state is as accurate as ODEX's
  // step and not merely as its interpolant.
  let t = bracket.tRoot;
  let landed = integrate(f, bracket.y0, bracket.t0, t, rtol, atol);
  let y = landed.y;
  let evaluations = res.nEval + landed.evaluations;
  for (let it = 0; it < 4; it++) {
    const dt = -legExcess(y[0], y[1], leg) / radialRate(y);
    if (!(Math.abs(dt) > 1e-15 * timeScale)) break;
    landed = integrate(f, y, t, t + dt, rtol, atol);
    y = landed.y;
    t += dt;
    evaluations += landed.evaluations;
  }

  return {
    px: y[0],
    py: y[1],
    vx: y[2],
    vy: y[3],
    contactTime: t,
    steps: res.nAccept,
    rejected: res.nReject,
    evaluations,
  };
}

/**
 * One stride apex → apex: closed-form flight to touchdown at a fixed attack
 * angle, odexStance, closed-form flight to the next apex.
 * Inputs: mass, leg, k, g as in odexStance; apexHeight (m, absolute),
 * forwardSpeed (m/s), attack (rad from horizontal), ground (m, height under
 * this touchdown, default 0), apexX (m, default 0), rtol, atol.
 */
export function odexStride({ mass, leg, k, g, apexHeight, forwardSpeed, attack, ground = 0, apexX = 0, rtol, atol }) {
  // Touchdown when the foot, L0 sin α below the body, meets the ground:
  // ballistic fall y = ya − g t²/2 (closed form, no drag).
  const drop = apexHeight - ground - leg * Math.sin(attack);
  if (!(drop > 0)) throw new Error(`odex stride: apex ${apexHeight} m is below the touchdown height ${ground + leg * Math.sin(attack)} m`);
  const tTouchdown = Math.sqrt((2 * drop) / g); // t = √(2 Δy / g), ballistic fall
  const px = -leg * Math.cos(attack); // foot ahead of the body: geometry of the leg at angle α
  const py = leg * Math.sin(attack);
  const vyTouchdown = -g * tTouchdown; // vy = −g t, ballistic
  const footX = apexX + forwardSpeed * tTouchdown - px; // x = x0 + vx t, then foot = body − p

  const stance = odexStance({ mass, leg, k, g, px, py, vx: forwardSpeed, vy: vyTouchdown, rtol, atol });

  const liftoffX = footX + stance.px;
  const liftoffY = ground + stance.py;
  if (!(stance.vy > 0)) throw new Error(`odex stride: left the ground descending (vy = ${stance.vy} m/s)`);
  const tRise = stance.vy / g; // vertical speed falls to zero after vy/g, ballistic
  const nextApexHeight = liftoffY + (stance.vy * stance.vy) / (2 * g); // y + vy²/(2g), ballistic
  const nextApexX = liftoffX + stance.vx * tRise; // x = x0 + vx t, ballistic

  return {
    touchdownTime: tTouchdown,
    footX,
    touchdownVx: forwardSpeed,
    touchdownVy: vyTouchdown,
    liftoffX,
    liftoffY,
    liftoffVx: stance.vx,
    liftoffVy: stance.vy,
    contactTime: stance.contactTime,
    nextApexHeight,
    nextApexSpeed: stance.vx, // no horizontal force in flight
    nextApexX,
    strideTime: tTouchdown + stance.contactTime + tRise,
    stance,
  };
}
