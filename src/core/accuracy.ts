// Tolerance that follows accuracy: `integrator.apex_accuracy_m` asks for the apex height of one
// stride to within that many metres of a tight-tolerance run from the same apex, and this picks the
// integrator's tolerances for it, so a Monte Carlo study at 1e-8 m does not pay for the defaults'
// 4e-11 m.
//
// The apex height after liftoff is y + vy²/(2g): an error δy in the liftoff height and δv in the
// liftoff speed move it by about δy + (vy/g)·δv. The stepper holds each component's error to
// about rtol·|component| (plus atol near zero crossings), positions of the size of the leg length
// L0 and speeds of the size of the running speed v and of the vertical speed a fall from the apex
// h brings to touchdown, so the apex error scales with
//   S = L0 + v²/g + 2·max(0, h − L0)   (the gait's length scale: leg length, twice the forward
//                                       speed's height, twice the fall from above the leg).
// Measured: one-stride apex height errors against a run at rtol 1e-13 over 196 reference
// scenarios (bodies of 1 g / 5 mm, 9 kg / 0.45 m, 80 kg / 1 m on Earth and the Moon, 50 t / 4 m;
// dimensionless stiffness k·L0/(m·g) 10, 25, 60; Froude numbers v²/(g·L0) 0.3, 1.5, 4; start
// apexes 0.95, 1.05, 1.2 L0; fixed angle and retraction; undamped and 10 % damped) stayed below
// 1.9·(L0 + v²/g)·rtol for rtol = atol/L0 from 1e-11 to 1e-5 (growing slowly as rtol shrinks).
// Hops from high above the leg were not among them, and without the fall term they erred beyond
// that: an 80 kg / 1 m hop in place from 2 L0 at 60 kN/m gave 1.2 times the requested accuracy at
// 1e-10 m, from 3 L0 at 80 kN/m 2 times; with it, S·rtol bounds them as it bounds the rest. The
// two-leg model (walkers at their fixed points: 80 kg / 1 m at 16, 20 and 24 kN/m, 28 kg / 0.6 m,
// 2 kg / 0.15 m, 50 t / 4 m, 1 g / 5 mm, on the Moon, damped; runners with fixed angle, retraction,
// damping; hops on both legs from 1.1 to 2 L0; its section height in place of the apex, L0 its
// longer leg) stayed below 1.7·S·rtol. The mapping takes about twice the largest, rtol = accuracy /
// (APEX_ERROR_FACTOR·S), atol = rtol·L0; test/accuracy.test.ts and test/biped-accuracy.test.ts
// check the achieved error against the request over further scenarios.

/** Apex height error per unit relative tolerance and gait length scale, with a factor 2 margin (see above). */
export const APEX_ERROR_FACTOR = 4;
/** The tightest relative tolerance the mapping picks: below it rounding, not the stepper, limits the apex. */
export const MIN_ACCURACY_RTOL = 1e-13;
/** The loosest: the calibration's range ends here (a looser request gets this, and more accuracy than asked). */
export const MAX_ACCURACY_RTOL = 1e-5;

export interface AccuracyTolerances {
  relative_tolerance: number;
  absolute_tolerance: number;
}

/** S = L0 + v²/g + 2·max(0, h − L0), m: the gait's length scale that the apex error grows with (h the start's apex or section height). */
export function gaitLengthScaleM(legLengthM: number, speedMPerS: number, apexHeightM: number, gravityMPerS2: number): number {
  return legLengthM + (speedMPerS * speedMPerS) / gravityMPerS2 + 2 * Math.max(0, apexHeightM - legLengthM);
}

/** The tolerances for an apex accuracy (m) on a gait of length scale S (m) and leg length L0 (m); null below the finest. */
export function tolerancesForScale(accuracyM: number, scaleM: number, legLengthM: number): AccuracyTolerances | null {
  const rtol = rawRelativeTolerance(accuracyM, scaleM);
  if (!(rtol >= MIN_ACCURACY_RTOL)) return null;
  const relative = Math.min(rtol, MAX_ACCURACY_RTOL);
  return { relative_tolerance: relative, absolute_tolerance: relative * legLengthM };
}

/** The relative tolerance that the mapping would pick, before the limits (for messages). */
export function rawRelativeTolerance(accuracyM: number, scaleM: number): number {
  return accuracyM / (APEX_ERROR_FACTOR * scaleM);
}

/** The smallest apex accuracy the mapping can give for this gait, m. */
export function finestApexAccuracyM(scaleM: number): number {
  return MIN_ACCURACY_RTOL * APEX_ERROR_FACTOR * scaleM;
}

/** What a result states about its integrator when the scenario asked for an apex accuracy. */
export interface AccuracyReport {
  apex_accuracy_m: number;
  relative_tolerance: number;
  absolute_tolerance: number;
  /** With a per-scenario calibration (accuracy-calibration.ts): the largest one-stride apex error measured at these tolerances, m. */
  calibrated_apex_error_m?: number;
  /** With a calibration: the reference strides it compared. */
  calibration_strides?: number;
  definition: string;
}

export const ACCURACY_DEFINITION =
  'apex_accuracy_m: the requested accuracy of one stride\'s apex height against a tight-tolerance run from the same apex; ' +
  'relative_tolerance and absolute_tolerance: the integrator tolerances it gives for this gait (accuracy / (4 (L0 + v^2/g + 2 max(0, h - L0))), v and h the start\'s speed and apex height; and that times L0)';

export const CALIBRATED_ACCURACY_DEFINITION =
  'apex_accuracy_m: the requested accuracy of one stride\'s apex height against a tight-tolerance run from the same apex; ' +
  'relative_tolerance and absolute_tolerance: the tolerances used, calibrated on this run\'s own gait: the loosest (from accuracy / (4 (L0 + v^2/g + 2 max(0, h - L0))), v and h the start\'s speed and apex height, ' +
  'upward by factors of 10^(1/4), atol = rtol L0) whose one-stride apex errors, and every tighter one\'s, stay within half the accuracy over the strides of ' +
  'the first rollouts rerun from their apexes of a run at rtol 1e-13; calibrated_apex_error_m: the largest of those errors at the tolerances used, ' +
  'over calibration_strides strides';

// The two-leg model's words: its section (the apex of a flight, or of single support in walking)
// and its leg (the longer one).
const BIPED_SECTION =
  'apex_accuracy_m: the requested accuracy of one stride\'s section height (the flight apex of a running stride, the single-support apex ' +
  'of a walking one) against a tight-tolerance run from the same section; ';
const BIPED_MAPPING = 'accuracy / (4 (L0 + v^2/g + 2 max(0, h - L0))), L0 the longer leg, v and h the start\'s speed and section height';

export const BIPED_ACCURACY_DEFINITION = `${BIPED_SECTION}relative_tolerance and absolute_tolerance: the integrator tolerances it gives for this gait (${BIPED_MAPPING}; and that times L0)`;

export const BIPED_CALIBRATED_ACCURACY_DEFINITION =
  `${BIPED_SECTION}relative_tolerance and absolute_tolerance: the tolerances used, calibrated on this run's own gait: the loosest (from ${BIPED_MAPPING}, ` +
  'upward by factors of 10^(1/4), atol = rtol L0) whose one-stride section height errors, and every tighter one\'s, stay within half the accuracy ' +
  'over the strides of the first rollouts rerun from their sections of a run at rtol 1e-13; calibrated_apex_error_m: the largest of those errors ' +
  'at the tolerances used, over calibration_strides strides';

/** `{ integrator: ... }` to spread into a result when the scenario set integrator.apex_accuracy_m; `{}` otherwise (outputs unchanged). */
export function accuracyReport(
  integrator: {
    apex_accuracy_m?: number;
    relative_tolerance: number;
    absolute_tolerance: number;
  },
  calibration?: { relative_tolerance: number; absolute_tolerance: number; calibrated_apex_error_m: number; calibration_strides: number } | null,
  model: 'slip' | 'biped' = 'slip',
): { integrator?: AccuracyReport } {
  if (integrator.apex_accuracy_m === undefined) return {};
  const biped = model === 'biped';
  if (calibration) {
    return {
      integrator: {
        apex_accuracy_m: integrator.apex_accuracy_m,
        relative_tolerance: calibration.relative_tolerance,
        absolute_tolerance: calibration.absolute_tolerance,
        calibrated_apex_error_m: calibration.calibrated_apex_error_m,
        calibration_strides: calibration.calibration_strides,
        definition: biped ? BIPED_CALIBRATED_ACCURACY_DEFINITION : CALIBRATED_ACCURACY_DEFINITION,
      },
    };
  }
  return {
    integrator: {
      apex_accuracy_m: integrator.apex_accuracy_m,
      relative_tolerance: integrator.relative_tolerance,
      absolute_tolerance: integrator.absolute_tolerance,
      definition: biped ? BIPED_ACCURACY_DEFINITION : ACCURACY_DEFINITION,
    },
  };
}
