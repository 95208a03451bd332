// Right-hand sides the stepper can integrate. The stepper calls rhs(y, dy); which
// system that is, and its parameters, are module state set by the caller before
// a run (one branch per call, perfectly predicted).

export const SYSTEM_STANCE = 0;
export const SYSTEM_ARENSTORF = 1;
export const SYSTEM_BIPED = 2; // two legs on the ground (biped.ts)

export let system: i32 = SYSTEM_STANCE;

// Stance parameters, set by the stance driver (stance.ts) per stance phase.
export let stanceMass: f64 = 1.0; // kg
export let stanceInvMass: f64 = 1.0; // 1/kg
export let stanceLeg: f64 = 1.0; // m, rest length L0
export let stanceK: f64 = 1.0; // N/m, current stiffness (switches at max compression)
export let stanceC: f64 = 0.0; // N·s/m, leg damping
export let stanceG: f64 = 9.80665; // m/s^2
// k/m and c/m, kept equal to stanceK * stanceInvMass and stanceC * stanceInvMass by every setter
// (the lane steps in dopri5x2.ts form the same products).
export let stanceKInvM: f64 = 1.0;
export let stanceCInvM: f64 = 0.0;

// Arenstorf restricted three-body problem (Hairer, Nørsett, Wanner, Solving ODEs I, II.0).
export let arenstorfMu: f64 = 0.012277471;

export function setStance(m: f64, leg: f64, k: f64, c: f64, g: f64): void {
  system = SYSTEM_STANCE;
  stanceMass = m;
  stanceInvMass = 1.0 / m;
  stanceLeg = leg;
  stanceK = k;
  stanceC = c;
  stanceG = g;
  stanceKInvM = k * stanceInvMass;
  stanceCInvM = c * stanceInvMass;
}

// The stance parameters as setStance leaves them (invM = 1/m), for a rollout
// that takes its turn again (stance.ts).
export function setStanceParams(m: f64, invM: f64, leg: f64, k: f64, c: f64, g: f64): void {
  system = SYSTEM_STANCE;
  stanceMass = m;
  stanceInvMass = invM;
  stanceLeg = leg;
  stanceK = k;
  stanceC = c;
  stanceG = g;
  stanceKInvM = k * stanceInvMass;
  stanceCInvM = c * stanceInvMass;
}

// Two legs in stance (double support), feet at (bipedFx*, bipedFy*) relative to the origin of
// (px, py); set by the two-leg driver (biped.ts). Gravity and mass as for the stance.
export let bipedFx0: f64 = 0.0;
export let bipedFy0: f64 = 0.0;
export let bipedFx1: f64 = 0.0;
export let bipedFy1: f64 = 0.0;
export let bipedL0: f64 = 1.0; // m, rest lengths
export let bipedL1: f64 = 1.0;
export let bipedK0: f64 = 1.0; // N/m, current stiffnesses
export let bipedK1: f64 = 1.0;
export let bipedC0: f64 = 0.0; // N·s/m
export let bipedC1: f64 = 0.0;
// k/m and c/m of each leg, kept equal to bipedK* * stanceInvMass and bipedC* * stanceInvMass by
// every setter (the walking steps in biped.ts and rk/biped-x2.ts form the same products).
export let bipedKInvM0: f64 = 1.0;
export let bipedKInvM1: f64 = 1.0;
export let bipedCInvM0: f64 = 0.0;
export let bipedCInvM1: f64 = 0.0;

export function setBiped(
  m: f64, g: f64, fx0: f64, fy0: f64, l0: f64, k0: f64, c0: f64, fx1: f64, fy1: f64, l1: f64, k1: f64, c1: f64,
): void {
  system = SYSTEM_BIPED;
  stanceMass = m;
  stanceInvMass = 1.0 / m;
  stanceG = g;
  bipedFx0 = fx0;
  bipedFy0 = fy0;
  bipedL0 = l0;
  bipedK0 = k0;
  bipedC0 = c0;
  bipedFx1 = fx1;
  bipedFy1 = fy1;
  bipedL1 = l1;
  bipedK1 = k1;
  bipedC1 = c1;
  bipedKInvM0 = k0 * stanceInvMass;
  bipedKInvM1 = k1 * stanceInvMass;
  bipedCInvM0 = c0 * stanceInvMass;
  bipedCInvM1 = c1 * stanceInvMass;
}

export function setBipedStiffness(leg: i32, k: f64): void {
  if (leg == 0) {
    bipedK0 = k;
    bipedKInvM0 = k * stanceInvMass;
  } else {
    bipedK1 = k;
    bipedKInvM1 = k * stanceInvMass;
  }
}

export function setStiffness(k: f64): void {
  stanceK = k;
  stanceKInvM = k * stanceInvMass;
}

export function setArenstorf(mu: f64): void {
  system = SYSTEM_ARENSTORF;
  arenstorfMu = mu;
}

// Stance with the foot pinned at the origin of (px, py) = body - foot:
//   m px'' = F px / r,  m py'' = F py / r - m g,  F = k (L0 - r) - c r'  (formed as F/m),
//   W' = c r'^2 (work dissipated by the damper).
// State layout: [px, py, vx, vy, W].
@inline function stanceRhs(px: f64, py: f64, vx: f64, vy: f64, dy: usize): void {
  const r2 = px * px + py * py;
  const r = Math.sqrt(r2);
  const inv = r * (1.0 / r2); // 1/r: the root and the division side by side, not one after the other
  const rdot = (px * vx + py * vy) * inv;
  const f = stanceKInvM * (stanceLeg - r) - stanceCInvM * rdot; // F / m
  store<f64>(dy, vx, 0);
  store<f64>(dy, vy, 8);
  store<f64>(dy, f * (inv * px), 16);
  store<f64>(dy, f * (inv * py) - stanceG, 24);
  store<f64>(dy, stanceC * rdot * rdot, 32);
}

@inline function arenstorfRhs(x: f64, yy: f64, vx: f64, vy: f64, dy: usize): void {
  const mu = arenstorfMu;
  const mup = 1.0 - mu;
  const d1a = (x + mu) * (x + mu) + yy * yy;
  const d2a = (x - mup) * (x - mup) + yy * yy;
  const d1 = d1a * Math.sqrt(d1a);
  const d2 = d2a * Math.sqrt(d2a);
  store<f64>(dy, vx, 0);
  store<f64>(dy, vy, 8);
  store<f64>(dy, x + 2.0 * vy - (mup * (x + mu)) / d1 - (mu * (x - mup)) / d2, 16);
  store<f64>(dy, yy - 2.0 * vx - (mup * yy) / d1 - (mu * yy) / d2, 24);
  store<f64>(dy, 0.0, 32);
}

// Double support: each leg pushes along itself from its foot, the forces add.
@inline function bipedRhs(px: f64, py: f64, vx: f64, vy: f64, dy: usize): void {
  const dx0 = px - bipedFx0;
  const dy0 = py - bipedFy0;
  const r0sq = dx0 * dx0 + dy0 * dy0;
  const r0 = Math.sqrt(r0sq);
  const inv0 = r0 * (1.0 / r0sq);
  const rdot0 = (dx0 * vx + dy0 * vy) * inv0;
  const f0 = bipedKInvM0 * (bipedL0 - r0) - bipedCInvM0 * rdot0; // F/m of leg 0
  const dx1 = px - bipedFx1;
  const dy1 = py - bipedFy1;
  const r1sq = dx1 * dx1 + dy1 * dy1;
  const r1 = Math.sqrt(r1sq);
  const inv1 = r1 * (1.0 / r1sq);
  const rdot1 = (dx1 * vx + dy1 * vy) * inv1;
  const f1 = bipedKInvM1 * (bipedL1 - r1) - bipedCInvM1 * rdot1;
  store<f64>(dy, vx, 0);
  store<f64>(dy, vy, 8);
  store<f64>(dy, f0 * (inv0 * dx0) + f1 * (inv1 * dx1), 16);
  store<f64>(dy, f0 * (inv0 * dy0) + f1 * (inv1 * dy1) - stanceG, 24);
  store<f64>(dy, bipedC0 * rdot0 * rdot0 + bipedC1 * rdot1 * rdot1, 32);
}

// f(y) into dy, the state given component by component (the stepper keeps it
// in locals); the last component (dissipated work) enters no right-hand side.
@inline export function rhs5(y0: f64, y1: f64, y2: f64, y3: f64, y4: f64, dy: usize): void {
  if (system == SYSTEM_STANCE) stanceRhs(y0, y1, y2, y3, dy);
  else if (system == SYSTEM_BIPED) bipedRhs(y0, y1, y2, y3, dy);
  else arenstorfRhs(y0, y1, y2, y3, dy);
}

// f(y) into dy, the state read from memory at y.
export function rhs(y: usize, dy: usize): void {
  rhs5(load<f64>(y, 0), load<f64>(y, 8), load<f64>(y, 16), load<f64>(y, 24), load<f64>(y, 32), dy);
}

// The right-hand side's whole setting (the system and every parameter above but Arenstorf's),
// SYSTEM_STATE_BYTES at p, and back: rollouts that take turns between steps (biped.ts) each
// keep their own.
export const SYSTEM_STATE_BYTES: usize = 17 * 8;
export function saveSystem(p: usize): void {
  store<f64>(p, <f64>system, 0);
  store<f64>(p, stanceMass, 8);
  store<f64>(p, stanceInvMass, 16);
  store<f64>(p, stanceLeg, 24);
  store<f64>(p, stanceK, 32);
  store<f64>(p, stanceC, 40);
  store<f64>(p, stanceG, 48);
  store<f64>(p, bipedFx0, 56);
  store<f64>(p, bipedFy0, 64);
  store<f64>(p, bipedFx1, 72);
  store<f64>(p, bipedFy1, 80);
  store<f64>(p, bipedL0, 88);
  store<f64>(p, bipedL1, 96);
  store<f64>(p, bipedK0, 104);
  store<f64>(p, bipedK1, 112);
  store<f64>(p, bipedC0, 120);
  store<f64>(p, bipedC1, 128);
}
export function loadSystem(p: usize): void {
  system = <i32>load<f64>(p, 0);
  stanceMass = load<f64>(p, 8);
  stanceInvMass = load<f64>(p, 16);
  stanceLeg = load<f64>(p, 24);
  stanceK = load<f64>(p, 32);
  stanceC = load<f64>(p, 40);
  stanceG = load<f64>(p, 48);
  bipedFx0 = load<f64>(p, 56);
  bipedFy0 = load<f64>(p, 64);
  bipedFx1 = load<f64>(p, 72);
  bipedFy1 = load<f64>(p, 80);
  bipedL0 = load<f64>(p, 88);
  bipedL1 = load<f64>(p, 96);
  bipedK0 = load<f64>(p, 104);
  bipedK1 = load<f64>(p, 112);
  bipedC0 = load<f64>(p, 120);
  bipedC1 = load<f64>(p, 128);
  stanceKInvM = stanceK * stanceInvMass;
  stanceCInvM = stanceC * stanceInvMass;
  bipedKInvM0 = bipedK0 * stanceInvMass;
  bipedKInvM1 = bipedK1 * stanceInvMass;
  bipedCInvM0 = bipedC0 * stanceInvMass;
  bipedCInvM1 = bipedC1 * stanceInvMass;
}
