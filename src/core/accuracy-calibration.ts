// Tolerance that follows accuracy, per scenario: `integrator.apex_accuracy_m` gives, at parse time,
// tolerances that meet the accuracy on every gait of the calibration of accuracy.ts (the worst of
// 196 gaits, with a factor 2). Most gaits are far more accurate than the worst one at a given
// tolerance (the human-like runner of the benchmark by a factor of about 15), so an analysis that
// runs many strides first calibrates the tolerance on the scenario's own gait:
//
//  1. a tight-tolerance reference (rtol 1e-13, atol 1e-13·L0) of a few of the analysis's own
//     rollouts (its terrain, its policy, its start), with every stride's apex and ground;
//  2. candidate tolerances from the parse-time ones upward by factors of 10^(1/4), at most
//     MAX_ACCURACY_RTOL (atol = rtol·L0 as there): each reference stride rerun alone from its
//     reference apex on its own ground, and its next apex height compared with the reference's;
//  3. the loosest candidate whose largest one-stride error, and every tighter candidate's, is
//     within accuracy / CALIBRATION_MARGIN (the parse-time tolerances when even the next one
//     misses, or when the reference completes too few strides to judge);
//  4. between that candidate and the first one that missed, CALIBRATION_BISECTIONS halvings of
//     the factor (in the logarithm): each midpoint kept when it is within the same bound. The
//     error grows about in proportion to the tolerance, so the coarse steps alone left up to a
//     factor 1.8 of the bound unused (the benchmark's runner: 3.8e-9 m of 5e-9 m); the result
//     is a multiple of 10^(1/16) (CALIBRATION_FINE_STEP) of the parse-time tolerance.
//
// Deterministic (the kernel's results are bit-reproducible), so every shard and worker of a run
// picks the same tolerances; cached per scenario and calibration rollouts. Results state the
// tolerances used and the largest one-stride apex error measured at them. test/accuracy-calibration.test.ts
// checks the achieved error over seeded scenarios on strides the calibration did not see.

import * as L from '../../assembly/layout.js';
import { MAX_ACCURACY_RTOL } from './accuracy.js';
import { loadEngine, rolloutInput, type Engine, type ModelBlock } from './engine.js';
import { accuracyLegLengthM, isBiped } from './models/biped.js';
import type { Scenario } from './scenario.js';

/** The calibration aims at this fraction of the requested accuracy: room for strides it did not see. */
export const CALIBRATION_MARGIN = 2;
/** Candidate tolerances step up by this factor. */
export const CALIBRATION_STEP = 10 ** 0.25;
/** Halvings of the last step (in the logarithm) between the loosest candidate within the bound and the first beyond it. */
export const CALIBRATION_BISECTIONS = 2;
/** The grid the calibrated tolerance lies on: CALIBRATION_STEP split by the bisections. */
export const CALIBRATION_FINE_STEP = CALIBRATION_STEP ** (1 / 2 ** CALIBRATION_BISECTIONS);
/** The reference's tolerance: rtol, and atol = rtol·L0. */
export const CALIBRATION_REFERENCE_RTOL = 1e-13;
/** Reference strides needed to judge a candidate; fewer keep the parse-time tolerances. */
export const CALIBRATION_MIN_STRIDES = 2;

export interface CalibratedTolerances {
  relative_tolerance: number;
  absolute_tolerance: number;
  /** Largest one-stride apex height error at these tolerances over the calibration strides, m. */
  calibrated_apex_error_m: number;
  /** Reference strides the calibration compared. */
  calibration_strides: number;
}

/** What the calibration runs: the analysis's model (any tolerances) and a few of its rollouts. */
export interface CalibrationRollouts {
  /** The model of the analysis; its tolerance fields are replaced. */
  model: ModelBlock;
  /** (n x I_SIZE) start inputs of the rollouts to calibrate on. */
  inputs: Float64Array;
  strides: number;
  /** Names the analysis in the cache key (the model fields and inputs are part of it too). */
  key: string;
}

const CACHE_LIMIT = 64;
const cache = new Map<string, CalibratedTolerances | null>();

function withTolerances(model: ModelBlock, rtol: number, atol: number): ModelBlock {
  const fields = model.fields.slice();
  fields[L.M_RTOL] = rtol;
  fields[L.M_ATOL] = atol;
  return { ...model, fields };
}

/** The model on flat-at-`ground` terrain for one stride (the kernel's steps terrain, one step). */
function oneStrideModel(model: ModelBlock, ground: number): ModelBlock {
  const fields = model.fields.slice();
  fields[L.M_TERRAIN_KIND] = L.TERRAIN_STEPS;
  fields[L.M_STEPS_N] = 1;
  return { ...model, fields, groundHeights: Float64Array.of(ground) };
}

/**
 * The calibrated tolerances of a scenario (single-leg or two-leg) with integrator.apex_accuracy_m, on the given
 * rollouts; null without the option, or when the reference completes fewer than
 * CALIBRATION_MIN_STRIDES strides (then the scenario's parse-time tolerances hold).
 */
export function calibrateTolerances(engine: Engine, scenario: Scenario, run: CalibrationRollouts): CalibratedTolerances | null {
  const accuracy = scenario.integrator.apex_accuracy_m;
  if (accuracy === undefined) return null;
  const key = [JSON.stringify(scenario), run.key, run.strides, Array.from(run.model.fields).join(','), Array.from(run.inputs).join(',')].join('\n');
  if (cache.has(key)) return cache.get(key) ?? null;

  const biped = isBiped(scenario);
  const leg = accuracyLegLengthM(scenario); // atol = rtol·L0, as the parse-time mapping
  const rtol0 = scenario.integrator.relative_tolerance;
  const atol0 = scenario.integrator.absolute_tolerance;
  const ref = engine.runBatch({
    model: withTolerances(run.model, CALIBRATION_REFERENCE_RTOL, CALIBRATION_REFERENCE_RTOL * leg),
    inputs: run.inputs,
    strides: run.strides,
    records: true,
  });
  const records = ref.records as Float64Array;
  // Each completed stride, restarted alone from its apex (the two-leg model: its section). A
  // walking stride starts with its stance foot on the ground the previous stride landed on (the
  // first on ground 0), and a restart stands that foot on ground 0: its heights are taken
  // relative to that foot's ground (`shift`; the dynamics are the same at any height).
  const strides: { input: Float64Array; shift: number; ground: number; next: number }[] = [];
  for (let i = 0; i < records.length / L.R_SIZE; i++) {
    const at = (f: number) => records[i * L.R_SIZE + f];
    if (!(at(L.R_STATUS) === L.STATUS_OK && Number.isFinite(at(L.R_NEXT_APEX_HEIGHT)))) continue;
    const walking = biped && at(L.R_SECTION_KIND) === L.SECTION_SINGLE_SUPPORT_APEX;
    const stride = i % run.strides;
    const shift = walking && stride > 0 ? records[(i - 1) * L.R_SIZE + L.R_GROUND] : 0;
    const input = rolloutInput(at(L.R_APEX_HEIGHT) - shift, at(L.R_APEX_SPEED), 0, strides.length);
    if (biped) {
      input[L.I_SECTION_KIND] = at(L.R_SECTION_KIND);
      input[L.I_SECTION_OFFSET] = walking ? at(L.R_SECTION_OFFSET) : 0;
      input[L.I_SECTION_LEG] = at(L.R_SECTION_LEG);
    }
    strides.push({ input, shift, ground: at(L.R_GROUND), next: at(L.R_NEXT_APEX_HEIGHT) });
  }

  const inputs = new Float64Array(strides.length * L.I_SIZE);
  strides.forEach((st, i) => inputs.set(st.input, i * L.I_SIZE));
  const errorAt = (rtol: number, atol: number): number => {
    const base = withTolerances(run.model, rtol, atol);
    const b = engine.runBatch({ model: strides.map((st) => oneStrideModel(base, st.ground - st.shift)), inputs, strides: 1, records: true });
    const got = b.records as Float64Array;
    let e = 0;
    for (let i = 0; i < strides.length; i++) {
      const next = got[i * L.R_SIZE + L.R_NEXT_APEX_HEIGHT] + strides[i].shift;
      e = Math.max(e, Number.isFinite(next) ? Math.abs(next - strides[i].next) : Infinity);
    }
    return e;
  };

  let chosen: CalibratedTolerances | null = null;
  if (strides.length >= CALIBRATION_MIN_STRIDES) {
    const target = accuracy / CALIBRATION_MARGIN;
    const e0 = errorAt(rtol0, atol0);
    // a stride that fails alone at the parse-time tolerances: nothing to judge by, keep them
    if (Number.isFinite(e0)) chosen = { relative_tolerance: rtol0, absolute_tolerance: atol0, calibrated_apex_error_m: e0, calibration_strides: strides.length };
    if (chosen && e0 <= target) {
      // candidates are rtol0 · CALIBRATION_FINE_STEP^j: coarse steps of 2^BISECTIONS fine ones
      const coarse = 2 ** CALIBRATION_BISECTIONS;
      const tryAt = (j: number): boolean => {
        const rtol = rtol0 * CALIBRATION_FINE_STEP ** j;
        if (!(rtol <= MAX_ACCURACY_RTOL)) return false;
        const atol = rtol * leg;
        const e = errorAt(rtol, atol);
        if (!(e <= target)) return false;
        chosen = { relative_tolerance: rtol, absolute_tolerance: atol, calibrated_apex_error_m: e, calibration_strides: strides.length };
        return true;
      };
      let pass = 0;
      while (tryAt(pass + coarse)) pass += coarse;
      // pass is within the bound, pass + coarse is not (or beyond MAX_ACCURACY_RTOL): halve the gap
      for (let half = coarse / 2; half >= 1; half /= 2) if (tryAt(pass + half)) pass += half;
    }
  }
  if (cache.size >= CACHE_LIMIT) cache.delete(cache.keys().next().value as string);
  cache.set(key, chosen);
  return chosen;
}

/** The scenario with its calibrated tolerances (a copy), and the calibration; the scenario itself without apex_accuracy_m. */
export async function calibratedScenario(
  scenario: Scenario,
  run: (s: Scenario) => CalibrationRollouts,
): Promise<{ scenario: Scenario; calibration: CalibratedTolerances | null }> {
  if (scenario.integrator.apex_accuracy_m === undefined) return { scenario, calibration: null };
  const engine = await loadEngine();
  const calibration = calibrateTolerances(engine, scenario, run(scenario));
  if (!calibration) return { scenario, calibration: null };
  return {
    scenario: {
      ...scenario,
      integrator: { ...scenario.integrator, relative_tolerance: calibration.relative_tolerance, absolute_tolerance: calibration.absolute_tolerance },
    },
    calibration,
  };
}
