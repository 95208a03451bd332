// Right-hand sides the stepper can integrate. The stepper calls rhs(y, dy); which
// system that is, and its parameters, are module state set by the caller before
// a run (one branch per call, perfectly predicted).

export const SYSTEM_STANCE = 0;
export const SYSTEM_ARENSTORF = 1;

export let system: i32 = SYSTEM_STANCE;

// Stance parameters, set by the stance driver (stance.ts) per stance phase.
export let stanceMass: f64 = 1.0; // kg
export let stanceLeg: f64 = 1.0; // m, rest length L0
export let stanceK: f64 = 1.0; // N/m, current stiffness (switches at max compression)
export let stanceC: f64 = 0.0; // N·s/m, leg damping
export let stanceG: f64 = 9.80665; // m/s^2

// Arenstorf restricted three-body problem (Hairer, Nørsett, Wanner, Solving ODEs I, II.0).
export let arenstorfMu: f64 = 0.012277471;

export function setStance(m: f64, leg: f64, k: f64, c: f64, g: f64): void {
  system = SYSTEM_STANCE;
  stanceMass = m;
  stanceLeg = leg;
  stanceK = k;
  stanceC = c;
  stanceG = g;
}

export function setStiffness(k: f64): void {
  stanceK = k;
}

export function setArenstorf(mu: f64): void {
  system = SYSTEM_ARENSTORF;
  arenstorfMu = mu;
}

// Stance with the foot pinned at the origin of (px, py) = body - foot:
//   m px'' = F px / r,  m py'' = F py / r - m g,  F = k (L0 - r) - c r',
//   W' = c r'^2 (work dissipated by the damper).
// State layout: [px, py, vx, vy, W].
@inline function stanceRhs(y: usize, dy: usize): void {
  const px = load<f64>(y, 0);
  const py = load<f64>(y, 8);
  const vx = load<f64>(y, 16);
  const vy = load<f64>(y, 24);
  const r = Math.sqrt(px * px + py * py);
  const inv = 1.0 / r;
  const rdot = (px * vx + py * vy) * inv;
  const force = stanceK * (stanceLeg - r) - stanceC * rdot;
  const a = force * inv / stanceMass;
  store<f64>(dy, vx, 0);
  store<f64>(dy, vy, 8);
  store<f64>(dy, a * px, 16);
  store<f64>(dy, a * py - stanceG, 24);
  store<f64>(dy, stanceC * rdot * rdot, 32);
}

@inline function arenstorfRhs(y: usize, dy: usize): void {
  const mu = arenstorfMu;
  const mup = 1.0 - mu;
  const x = load<f64>(y, 0);
  const yy = load<f64>(y, 8);
  const vx = load<f64>(y, 16);
  const vy = load<f64>(y, 24);
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

export function rhs(y: usize, dy: usize): void {
  if (system == SYSTEM_STANCE) stanceRhs(y, dy);
  else arenstorfRhs(y, dy);
}
