// The closed-form approximate stance of Geyer, Seyfarth and Blickhan (2005, "Spring-mass running:
// simple approximate solution and application to gait stability", J. Theor. Biol.
// 232(3):315-328), re-derived here, and the approximate apex return map built on it.
//
// Derivation. Foot at the origin, body at r (cos ψ, sin ψ): ψ is the leg's angle from the
// forward horizontal, so at touchdown ψ0 = π - α (α the attack angle, foot ahead) and at liftoff
// ψ is the liftoff angle from the horizontal with the foot behind (the kernel's R_LIFTOFF_ANGLE).
// The stance equations of the point mass on a massless spring leg (stiffness k, rest length L0):
//   m (r'' - r ψ'²) = k (L0 - r) - m g sin ψ          (radial)
//   d/dt (m r² ψ') = -m g r cos ψ                     (angular momentum about the foot)
// Small sweep (the leg stays near the vertical) and small compression (ρ = r - L0 << L0):
//  1. the gravity torque -m g r cos ψ is odd about the vertical and small: drop it, so the angular
//     momentum keeps its touchdown value, r² ψ' = L0² ω0 with ω0 = ψ'(0);
//  2. in the radial equation sin ψ ≈ 1 (gravity acts along the leg);
//  3. the centrifugal term, r ψ'² = L0⁴ ω0² / r³, linearized about r = L0:
//     L0 ω0² (1 + ρ/L0)^-3 ≈ L0 ω0² (1 - 3 ρ/L0).
// Then  ρ'' = L0 ω0² - 3 ω0² ρ - (k/m) ρ - g, i.e.
//   ρ'' + ω̂² ρ = a,   ω̂² = k/m + 3 ω0²,   a = L0 ω0² - g,
//   ρ(t) = (a/ω̂²)(1 - cos ω̂t) + (ṙ0/ω̂) sin ω̂t          (ρ(0) = 0, ρ'(0) = ṙ0).
// The angle from the conserved angular momentum to first order in ρ:
//   ψ' = ω0 (1 + ρ/L0)^-2 ≈ ω0 (1 - 2ρ/L0)  =>  ψ(t) = ψ0 + ω0 t - (2 ω0 / L0) ∫0^t ρ dτ,
//   ∫0^t ρ = (a/ω̂²)(t - sin(ω̂t)/ω̂) + (ṙ0/ω̂²)(1 - cos ω̂t).
// This is the paper's form as recalled (docs/references.md), re-derived here. With one stiffness the
// solution is symmetric about maximum compression (a linear oscillator under a constant force),
// so liftoff (ρ = 0 again) is at tan(ω̂ t_c / 2) = -ṙ0 ω̂ / a and the radial speed reverses.
// A split stiffness (kc until maximum compression, ke after) uses the same solution piecewise:
// the compression phase with ω̂c until ρ' = 0 (tan ω̂c t_m = -ṙ0 ω̂c / a), then from rest at ρ_m
//   ρ(τ) = a/ω̂e² + (ρ_m - a/ω̂e²) cos ω̂e τ,   ∫0^τ ρ = (a/ω̂e²) τ + (ρ_m - a/ω̂e²) sin(ω̂e τ)/ω̂e,
// with liftoff at cos ω̂e τ = a / (a - ρ_m ω̂e²).
// Energy correction (as in the paper): the approximation gives the liftoff angle ψ_lo and the
// direction of the liftoff velocity (radial ρ', tangential L0 ω0 at r = L0); its magnitude is
// taken from energy conservation at the liftoff height L0 sin ψ_lo, with the split stiffness'
// exact energy change ½ (ke - kc) δ² (δ the approximate maximum compression) added.

import * as L from '../../../assembly/layout.js';
import { InputError } from '../errors.js';
import { DEG, STATUS_NAMES } from '../model.js';
import type { AnglePolicy, Scenario } from '../scenario.js';
import {
  findFixedPoints,
  heightStep,
  highestSurvivingSample,
  mapCell,
  mapSlopes,
  sampleMaps,
  speedAt,
  type MapSampleOut,
  type StrideEvaluator,
  type StrideOutcome,
} from './return-map.js';

export interface ApproximateStrideInput {
  mass_kg: number;
  leg_length_m: number;
  gravity_m_per_s2: number;
  /** Stiffness until maximum compression, N/m. */
  compression_stiffness_N_per_m: number;
  /** Stiffness after maximum compression, N/m (= compression for a constant spring). */
  extension_stiffness_N_per_m: number;
  /** Leg angle from the horizontal at touchdown, foot ahead, rad. */
  attack_rad: number;
  touchdown_vx_m_per_s: number;
  /** Vertical speed at touchdown, m/s (<= 0: descending). */
  touchdown_vy_m_per_s: number;
}

export interface ApproximateStride {
  /** STATUS_* code: OK, FELL_BACKWARD, NO_LIFTOFF or NO_APEX. */
  status: number;
  /** Angular velocity of the leg at touchdown, ψ'(0), rad/s (negative running forward). */
  touchdown_angular_velocity_rad_per_s: number;
  touchdown_radial_speed_m_per_s: number;
  contact_s: number;
  max_compression_m: number;
  max_compression_time_s: number;
  /** Leg angle from the horizontal at liftoff, foot behind, rad. */
  liftoff_angle_rad: number;
  /** ψ0 - ψ_lo = π - attack - liftoff angle, rad. */
  sweep_rad: number;
  /** Liftoff velocity with the energy correction, m/s. */
  liftoff_vx_m_per_s: number;
  liftoff_vy_m_per_s: number;
  /** Apex height above the ground of this stance, m, and the forward speed there. */
  next_apex_height_m: number;
  next_forward_speed_m_per_s: number;
}

/** One stance by the closed-form approximation (derivation above), from touchdown to the next apex. */
export function approximateStride(input: ApproximateStrideInput): ApproximateStride {
  const m = input.mass_kg;
  const L0 = input.leg_length_m;
  const g = input.gravity_m_per_s2;
  const kc = input.compression_stiffness_N_per_m;
  const ke = input.extension_stiffness_N_per_m;
  const alpha = input.attack_rad;
  const vx = input.touchdown_vx_m_per_s;
  const vy = input.touchdown_vy_m_per_s;
  const psi0 = Math.PI - alpha;
  // position relative to the foot L0 (cos ψ0, sin ψ0); ψ' = (p × v) / L0², ṙ = p·v / L0
  const px = L0 * Math.cos(psi0);
  const py = L0 * Math.sin(psi0);
  const omega0 = (px * vy - py * vx) / (L0 * L0);
  const rdot0 = (px * vx + py * vy) / L0;
  const result: ApproximateStride = {
    status: L.STATUS_OK,
    touchdown_angular_velocity_rad_per_s: omega0,
    touchdown_radial_speed_m_per_s: rdot0,
    contact_s: NaN,
    max_compression_m: NaN,
    max_compression_time_s: NaN,
    liftoff_angle_rad: NaN,
    sweep_rad: NaN,
    liftoff_vx_m_per_s: NaN,
    liftoff_vy_m_per_s: NaN,
    next_apex_height_m: NaN,
    next_forward_speed_m_per_s: NaN,
  };
  if (omega0 > 0) return { ...result, status: L.STATUS_FELL_BACKWARD };

  const a = L0 * omega0 * omega0 - g;
  // compression: ω̂c, until ρ' = (a/ω̂) sin ω̂t + ṙ0 cos ω̂t = 0
  const wc = Math.sqrt(kc / m + 3 * omega0 * omega0);
  const tm = Math.atan2(-rdot0 * wc, a) / wc;
  const offsetC = a / (wc * wc);
  const rhoM = offsetC - Math.hypot(offsetC, rdot0 / wc);
  const integralC = offsetC * (tm - Math.sin(wc * tm) / wc) + (rdot0 / (wc * wc)) * (1 - Math.cos(wc * tm));
  // extension: ω̂e, from rest at ρ_m until ρ = 0
  const we = Math.sqrt(ke / m + 3 * omega0 * omega0);
  const offsetE = a / (we * we);
  const amplitudeE = offsetE - rhoM; // ρ(τ) = offsetE - amplitudeE cos ω̂e τ
  // liftoff needs cos ω̂e τ = offsetE / amplitudeE in [-1, 1]: the extension must swing back past
  // the equilibrium compression -offsetE
  if (!(amplitudeE > 0) || amplitudeE < -offsetE) {
    return { ...result, status: L.STATUS_NO_LIFTOFF, max_compression_m: -rhoM, max_compression_time_s: tm };
  }
  const tau = Math.acos(Math.min(1, Math.max(-1, offsetE / amplitudeE))) / we;
  const integralE = offsetE * tau - amplitudeE * (Math.sin(we * tau) / we);
  const rhoDotLift = amplitudeE * we * Math.sin(we * tau);
  const contact = tm + tau;
  const psiLift = psi0 + omega0 * contact - ((2 * omega0) / L0) * (integralC + integralE);
  const delta = -rhoM;

  // liftoff velocity direction: radial ρ' e_r + tangential L0 ω0 e_ψ at r = L0
  const c = Math.cos(psiLift);
  const s = Math.sin(psiLift);
  const ux = rhoDotLift * c - L0 * omega0 * s;
  const uy = rhoDotLift * s + L0 * omega0 * c;
  // energy correction: speed from energy conservation (plus the split stiffness' exact work)
  const energyTouchdown = m * g * L0 * Math.sin(alpha) + 0.5 * m * (vx * vx + vy * vy);
  const energyLift = energyTouchdown + 0.5 * (ke - kc) * delta * delta;
  const speed2 = (2 * (energyLift - m * g * L0 * s)) / m;
  const out = {
    ...result,
    contact_s: contact,
    max_compression_m: delta,
    max_compression_time_s: tm,
    liftoff_angle_rad: psiLift,
    sweep_rad: psi0 - psiLift,
  };
  if (!(speed2 > 0)) return { ...out, status: L.STATUS_NO_APEX };
  const speed = Math.sqrt(speed2);
  const norm = Math.hypot(ux, uy);
  const lvx = norm > 0 ? (speed * ux) / norm : 0;
  const lvy = norm > 0 ? (speed * uy) / norm : speed;
  const withVelocity = { ...out, liftoff_vx_m_per_s: lvx, liftoff_vy_m_per_s: lvy };
  if (lvx < 0) return { ...withVelocity, status: L.STATUS_FELL_BACKWARD };
  if (!(lvy > 0)) return { ...withVelocity, status: L.STATUS_NO_APEX };
  return {
    ...withVelocity,
    next_apex_height_m: L0 * s + (lvy * lvy) / (2 * g),
    next_forward_speed_m_per_s: lvx,
  };
}

// ---------------------------------------------------------------------------------------------
// The policy's schedules, in TypeScript (the same rules as assembly/policy.ts).

/** Attack angle commanded t seconds after the apex, rad. */
export function attackAtTime(angle: AnglePolicy, t: number): number {
  switch (angle.kind) {
    case 'fixed':
      return angle.attack_deg * DEG;
    case 'retraction': {
      let a = angle.attack_at_apex_deg + angle.rate_deg_per_s * t;
      if (angle.min_deg !== undefined && a < angle.min_deg) a = angle.min_deg;
      if (angle.max_deg !== undefined && a > angle.max_deg) a = angle.max_deg;
      return a * DEG;
    }
    case 'time_table':
      return interpolate(angle.time_since_apex_s, angle.attack_deg, t) * DEG;
  }
}

// Piecewise linear, held flat past both ends.
function interpolate(times: readonly number[], values: readonly number[], t: number): number {
  if (t <= times[0]) return values[0];
  const n = times.length;
  if (t >= times[n - 1]) return values[n - 1];
  let i = 1;
  while (times[i] < t) i++;
  const w = (t - times[i - 1]) / (times[i] - times[i - 1]);
  return values[i - 1] + w * (values[i] - values[i - 1]);
}

/** Time from the apex to touchdown on ground 0, or -1 (leg not placeable) / -2 (ground first). */
export function touchdownTime(angle: AnglePolicy, legLength: number, gravity: number, apexHeight: number): number {
  const gap = (t: number) => apexHeight - 0.5 * gravity * t * t - legLength * Math.sin(attackAtTime(angle, t));
  const g0 = gap(0);
  if (!(g0 > 0)) return -1;
  if (angle.kind === 'fixed') return Math.sqrt((2 * g0) / gravity);
  const tEnd = Math.sqrt((2 * apexHeight) / gravity);
  const PIECES = 512;
  let a = 0;
  for (let j = 1; j <= PIECES; j++) {
    const b = (tEnd * j) / PIECES;
    if (gap(b) <= 0) {
      let lo = a;
      let hi = b;
      for (let it = 0; it < 200 && hi - lo > 4e-16 * hi; it++) {
        const mid = 0.5 * (lo + hi);
        if (gap(mid) > 0) lo = mid;
        else hi = mid;
      }
      return hi;
    }
    a = b;
  }
  return -2;
}

/** Compression and extension stiffness for a touchdown t seconds after the apex. */
export function stiffnessAtTouchdown(scenario: Scenario, t: number): { kc: number; ke: number } {
  const k = scenario.policy.stiffness;
  switch (k.kind) {
    case 'constant':
      return { kc: scenario.body.leg_stiffness_N_per_m, ke: scenario.body.leg_stiffness_N_per_m };
    case 'split':
      return { kc: k.compression_N_per_m, ke: k.extension_N_per_m };
    case 'time_table':
      return { kc: interpolate(k.time_since_apex_s, k.compression_N_per_m, t), ke: interpolate(k.time_since_apex_s, k.extension_N_per_m, t) };
  }
}

/** One apex-to-apex stride of a scenario's policy on ground 0 by the approximation. */
export function approximateApexStride(scenario: Scenario, apexHeight: number, forwardSpeed: number): StrideOutcome & { stride?: ApproximateStride } {
  const { body } = scenario;
  const t = touchdownTime(scenario.policy.angle, body.leg_length_m, body.gravity_m_per_s2, apexHeight);
  if (t < 0) return { status: t === -1 ? L.STATUS_LEG_NOT_PLACEABLE : L.STATUS_BODY_HIT_GROUND, nextHeight: NaN, nextSpeed: NaN };
  const { kc, ke } = stiffnessAtTouchdown(scenario, t);
  const stride = approximateStride({
    mass_kg: body.mass_kg,
    leg_length_m: body.leg_length_m,
    gravity_m_per_s2: body.gravity_m_per_s2,
    compression_stiffness_N_per_m: kc,
    extension_stiffness_N_per_m: ke,
    attack_rad: attackAtTime(scenario.policy.angle, t),
    touchdown_vx_m_per_s: forwardSpeed,
    touchdown_vy_m_per_s: -body.gravity_m_per_s2 * t,
  });
  const ok = stride.status === L.STATUS_OK;
  return { status: stride.status, nextHeight: ok ? stride.next_apex_height_m : NaN, nextSpeed: ok ? stride.next_forward_speed_m_per_s : NaN, stride };
}

/** The approximation as a stride evaluator (query.cell indexes `scenarios`). */
export function approximateEvaluator(scenarios: readonly Scenario[]): StrideEvaluator {
  for (const s of scenarios) {
    if (s.body.leg_damping_N_s_per_m > 0) {
      throw new InputError([
        {
          path: '--approx',
          expected: 'a scenario without leg damping (the closed-form approximation has no damper)',
          found: `body.leg_damping_N_s_per_m ${s.body.leg_damping_N_s_per_m}`,
        },
      ]);
    }
  }
  return async (queries) => queries.map((q) => approximateApexStride(scenarios[q.cell], q.height, q.speed));
}

// ---------------------------------------------------------------------------------------------
// The approximate map beside the exact one.

export interface ApproximateFixedPointOut {
  apex_height_m: number;
  forward_speed_m_per_s: number;
  slope: number;
  slope_error: number;
  stable: boolean;
}

export interface ApproximateMapOut {
  method: string;
  samples: MapSampleOut[];
  fixed_points: ApproximateFixedPointOut[];
  /** Largest |P_approx(y) - P(y)| over the samples where both strides survive, m (null if none). */
  max_abs_error_m: number | null;
  max_abs_error_at_m: number | null;
  compared_samples: number;
}

/**
 * The approximate map sampled exactly as the exact one (same `samples`, hence the same heights),
 * its fixed points, and its largest difference from the exact samples `exact`.
 */
export async function approximateReturnMap(
  scenario: Scenario,
  energy_J: number,
  samples: number,
  exact: readonly MapSampleOut[],
): Promise<ApproximateMapOut> {
  const evaluate = approximateEvaluator([scenario]);
  const cell = mapCell(scenario, energy_J);
  const [sampled] = await sampleMaps([cell], samples, evaluate);
  const [roots] = await findFixedPoints([cell], [sampled], evaluate);
  const top = highestSurvivingSample(sampled);
  const slopes = await mapSlopes([cell], roots.roots.map((r) => ({ cell: 0, y: r.y, h0: heightStep(cell, r.y, top) })), evaluate);
  const out: MapSampleOut[] = sampled.samples.map((p) => {
    const ok = p.outcome.status === L.STATUS_OK;
    return {
      apex_height_m: p.y,
      next_apex_height_m: ok ? p.outcome.nextHeight : null,
      forward_speed_m_per_s: p.v,
      next_forward_speed_m_per_s: ok ? p.outcome.nextSpeed : null,
      status: STATUS_NAMES[p.outcome.status] ?? 'unknown',
    };
  });
  let maxError: number | null = null;
  let maxAt: number | null = null;
  let compared = 0;
  out.forEach((p, i) => {
    const e = exact[i];
    if (p.next_apex_height_m === null || e?.next_apex_height_m === null || e === undefined) return;
    compared++;
    const error = Math.abs(p.next_apex_height_m - e.next_apex_height_m);
    if (maxError === null || error > maxError) {
      maxError = error;
      maxAt = p.apex_height_m;
    }
  });
  const fixedPoints: ApproximateFixedPointOut[] = [];
  roots.roots.forEach((r, i) => {
    const d = slopes[i];
    if (!d) return;
    fixedPoints.push({ apex_height_m: r.y, forward_speed_m_per_s: speedAt(cell, r.y), slope: d.value, slope_error: d.error, stable: Math.abs(d.value) < 1 });
  });
  return {
    method:
      'closed-form small-sweep, small-compression stance (Geyer, Seyfarth, Blickhan 2005, J. Theor. Biol. 232:315-328), ' +
      'liftoff direction from the approximation, liftoff speed from energy conservation',
    samples: out,
    fixed_points: fixedPoints,
    max_abs_error_m: maxError,
    max_abs_error_at_m: maxAt,
    compared_samples: compared,
  };
}
