// The study follows the scenario's model kind (src/ui/lib/study-kinds.ts): a study written for one
// kind, fitted to another, keeps what that kind's search has and drops the rest by name, fills an
// empty objective or free-parameter list from the kind's demo study, and is then a study the same
// validator as `pronk optimize` accepts (src/core/optimize/study.ts). What each kind has is
// core/optimize/kinds.ts (supportedTerms, supportedLimits, LATERAL_PARAMETERS).
import { describe, expect, it } from 'vitest';
import demo from '../../scenarios/demo.json' with { type: 'json' };
import demoBiped from '../../scenarios/demo-biped.json' with { type: 'json' };
import demoBipedRun from '../../scenarios/demo-biped-run.json' with { type: 'json' };
import demoHexapod from '../../scenarios/demo-hexapod.json' with { type: 'json' };
import { LATERAL_PARAMETERS, supportedLimits } from '../../src/core/optimize/kinds.js';
import { getAt } from '../../src/ui/lib/draft.js';
import { searchablePaths } from '../../src/ui/lib/fields.js';
import { draftOfKind, viewUnsupported } from '../../src/ui/lib/kinds.js';
import { demoStudyOf, fitStudy, fitText, limitFieldsOf, limitName, studyMisfit, termKindsOf } from '../../src/ui/lib/study-kinds.js';
import { checkScenario, checkStudy } from '../../src/ui/lib/workbench.svelte.js';

type Json = Record<string, unknown>;
const valid = (study: Json, scenario: unknown) => {
  const check = checkStudy(study, scenario);
  expect(check.issues).toEqual([]);
  expect(check.value).not.toBeNull();
};

describe('each kind has its demo study', () => {
  it('fits its own demo scenario unchanged, and the validator accepts it', () => {
    for (const [kind, scenario] of [['slip', demo], ['biped', demoBiped], ['biped', demoBipedRun], ['lateral', demoHexapod]] as const) {
      const study = demoStudyOf(kind);
      expect(study.scenario_file).toBeUndefined();
      const fit = fitStudy(study, scenario);
      expect(fit.dropped).toEqual([]);
      expect(fit.added).toEqual([]);
      expect(fit.moved).toEqual([]);
      expect(fit.study).toEqual(study);
      valid(fit.study, scenario);
    }
  });

  it('runs the optimizer for every kind in the workbench, on the last valid scenario as parsed', () => {
    for (const kind of ['slip', 'biped', 'lateral'] as const) expect(viewUnsupported(kind, 'optimize')).toBeNull();
    // the workbench hands the search the parsed scenario (Workbench.runOptimization): parsed again, the same
    for (const [kind, scenario] of [['biped', demoBiped], ['biped', demoBipedRun], ['lateral', demoHexapod]] as const) {
      const parsed = checkScenario(scenario).value;
      valid(demoStudyOf(kind), parsed);
      expect(checkStudy(demoStudyOf(kind), parsed).value!.scenario).toEqual(checkStudy(demoStudyOf(kind), scenario).value!.scenario);
    }
  });
});

describe('a study fitted to another kind', () => {
  it('single leg to two legs: drops only the friction limit (refused for two legs by name)', () => {
    const misfit = studyMisfit(demoStudyOf('slip'), demoBiped);
    expect(misfit).toEqual({ limits: ['friction_coefficient'], terms: [], parameters: [0, 1, 2], mismatch: false });
    const fit = fitStudy(demoStudyOf('slip'), demoBiped);
    expect(fit.dropped[0]).toBe('the friction limit');
    expect(fit.dropped.slice(1).map((d) => d.split(' (')[0])).toEqual(['free parameter 1', 'free parameter 2', 'free parameter 3']);
    // the walker has a fixed attack angle: its demo study's free parameters fill the empty list
    expect((fit.study.free_parameters as Json[]).map((p) => p.path)).toEqual(['policy.angle.attack_deg', 'body.leg_stiffness_N_per_m']);
    expect((fit.study.constraints as Json).friction_coefficient).toBeUndefined();
    expect((fit.study.constraints as Json).max_leg_force_N).toBe(900); // kept: a limit both kinds have
    expect(fit.study.search).toEqual(demoStudyOf('slip').search);
    valid(fit.study, demoBiped);
  });

  it('a switch of kind in the editor keeps the retraction policy and so the free parameters', () => {
    const biped = draftOfKind('biped', structuredClone(demo) as Json);
    const fit = fitStudy(demoStudyOf('slip'), biped);
    expect(fit.dropped).toEqual(['the friction limit']);
    expect(fitText(fit)).toBe('drops the friction limit');
    valid(fit.study, biped);
  });

  it('single leg to lateral: the lateral search has one term, two limits, three free parameters and no model mismatch', () => {
    const fit = fitStudy(demoStudyOf('slip'), demoHexapod);
    const constraints = fit.study.constraints as Json;
    expect(Object.keys(constraints).sort()).toEqual([...supportedLimits('lateral')].sort());
    expect((getAt(fit.study, 'objective.terms') as Json[]).map((t) => t.kind)).toEqual(['recovery']);
    expect((fit.study.free_parameters as Json[]).map((p) => p.path)).toEqual([...LATERAL_PARAMETERS]);
    expect(fit.study.model_mismatch).toBeUndefined();
    expect(fit.dropped).toEqual(expect.arrayContaining(['the friction limit', 'the touchdown angle range', 'the hip rate limit', 'the actuator stiffness range', 'the model mismatch']));
    expect(fit.dropped.filter((d) => d.startsWith('term '))).toHaveLength(3);
    expect(fit.added).toHaveLength(2);
    valid(fit.study, demoHexapod);
  });

  it("moves a filled-in parameter's bounds to hold the scenario's value (else the start is out of bounds)", () => {
    const stiff = { ...structuredClone(demoHexapod), body: { ...demoHexapod.body, leg_stiffness_N_per_m: 1000 } };
    const fit = fitStudy(demoStudyOf('slip'), stiff);
    const k = (fit.study.free_parameters as Json[]).find((p) => p.path === 'body.leg_stiffness_N_per_m')!;
    // the demo study's 450 to 900 N/m does not hold 1000: 1000 ± 20 %
    expect([k.lower, k.upper]).toEqual([800, 1200]);
    valid(fit.study, stiff);
  });

  it("lateral to single leg and to two legs: the kind's demo terms come back, a kept stiffness moves to the robot's scale", () => {
    for (const scenario of [demo, demoBiped]) {
      const fit = fitStudy(demoStudyOf('lateral'), scenario);
      expect(fit.dropped).toEqual(expect.arrayContaining(['term 1 (kick recovery)']));
      expect((getAt(fit.study, 'objective.terms') as Json[]).map((t) => t.kind)).toEqual((getAt(demoStudyOf(scenario === demo ? 'slip' : 'biped'), 'objective.terms') as Json[]).map((t) => t.kind));
      // the hexapod's 450 to 900 N/m cannot hold the robot's stiffness: ±20 % of it
      const k = (fit.study.free_parameters as Json[]).find((p) => p.path === 'body.leg_stiffness_N_per_m')!;
      const value = scenario.body.leg_stiffness_N_per_m;
      expect([k.lower, k.upper]).toEqual([Number((0.8 * value).toPrecision(4)), Number((1.2 * value).toPrecision(4))]);
      expect(fitText(fit)).toMatch(/moves the bounds of free parameter Leg stiffness/);
      valid(fit.study, scenario);
    }
  });

  it('keeps what the user set that the kind has', () => {
    const study = demoStudyOf('slip');
    (study.constraints as Json).max_compression_fraction = 0.3;
    (study.search as Json).max_evaluations = 17;
    const fit = fitStudy(study, demoHexapod);
    expect((fit.study.constraints as Json).max_compression_fraction).toBe(0.3);
    expect((fit.study.search as Json).max_evaluations).toBe(17);
    expect(fit.study.seed).toBe(study.seed);
  });
});

describe('the study editor offers the kind’s own', () => {
  it('limits: the kind’s (core/optimize/kinds.ts), and any other the draft sets so that it can be cleared', () => {
    const names = (kind: 'slip' | 'biped' | 'lateral', study: Json = {}) => [...new Set(limitFieldsOf(kind, study).map((f) => limitName(f.path)))];
    expect(names('lateral').sort()).toEqual([...supportedLimits('lateral')].sort());
    expect(names('biped')).toContain('max_vertical_force_N');
    expect(names('biped')).not.toContain('friction_coefficient');
    expect(names('slip')).not.toContain('max_vertical_force_N');
    expect(names('lateral', { constraints: { friction_coefficient: 0.8 } })).toContain('friction_coefficient');
  });

  it('terms and free parameters', () => {
    expect(termKindsOf('lateral').map((t) => t.kind)).toEqual(['recovery']);
    expect(termKindsOf('biped').map((t) => t.kind)).toEqual(['survival', 'tracking', 'basin', 'step_down']);
    expect(searchablePaths(demoHexapod)).toEqual(['policy.angle.angle_to_body_deg', 'body.leg_stiffness_N_per_m', 'body.attachment_offset_m']);
    const legs = searchablePaths({ ...demoBiped, legs: { right: { stiffness_scale: 0.9 } } });
    expect(legs).toContain('legs.right.stiffness_scale');
    expect(searchablePaths(demo)).not.toContain('legs.right.stiffness_scale');
  });
});
