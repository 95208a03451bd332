// The workbench's plain helpers: what a typed number becomes in the draft, where a field path
// leads, what an opened file is, and the pairing of two policies' rollouts on the same terrain.
import { describe, expect, it } from 'vitest';
import { InputError } from '../../src/core/errors.js';
import type { RobustnessRow } from '../../src/core/analysis/robustness.js';
import { pairSurvival, ranges } from '../../src/ui/lib/compute.js';
import { getAt, numberFromText, setAt } from '../../src/ui/lib/draft.js';
import { classifyFile, studyFile } from '../../src/ui/lib/files.js';
import { unitOfPath } from '../../src/ui/lib/fields.js';
import { History, COALESCE_MS } from '../../src/ui/lib/history.js';
import { explainIssues, fieldLabel } from '../../src/ui/lib/issues.js';
import { marginRows } from '../../src/ui/lib/margins.js';
import { checkScenario, checkStudy, demoScenarioDraft, demoStudyDraft } from '../../src/ui/lib/workbench.svelte.js';

describe('typed numbers', () => {
  it('become numbers when they are JSON-like numbers, and stay text otherwise', () => {
    expect(numberFromText('')).toBeUndefined();
    expect(numberFromText('   ')).toBeUndefined();
    expect(numberFromText(' 12 ')).toBe(12);
    expect(numberFromText('1e-3')).toBe(0.001);
    expect(numberFromText('-.5')).toBe(-0.5);
    expect(numberFromText('3.')).toBe(3);
    expect(numberFromText('9x')).toBe('9x');
    expect(numberFromText('0x10')).toBe('0x10'); // not a decimal number: reported as typed
    expect(numberFromText('1,5')).toBe('1,5');
  });
});

describe('draft paths', () => {
  it('read and write the paths the validators report', () => {
    const draft: Record<string, unknown> = { policy: { angle: { kind: 'time_table', attack_deg: [60, 62] } } };
    expect(getAt(draft, 'policy.angle.attack_deg[1]')).toBe(62);
    setAt(draft, 'policy.angle.attack_deg[1]', 63);
    setAt(draft, 'constraints.leg_angle_range_deg.min_deg', 55);
    expect(draft).toEqual({ policy: { angle: { kind: 'time_table', attack_deg: [60, 63] } }, constraints: { leg_angle_range_deg: { min_deg: 55 } } });
    setAt(draft, 'constraints.leg_angle_range_deg.min_deg', undefined);
    expect(draft.constraints).toEqual({ leg_angle_range_deg: {} });
  });

  it('name the unit of a field from its name (docs/contract.md: the unit is in every field name)', () => {
    expect(unitOfPath('policy.angle.rate_deg_per_s')).toBe('°/s');
    expect(unitOfPath('policy.angle.attack_deg[2]')).toBe('°');
    expect(unitOfPath('body.leg_damping_N_s_per_m')).toBe('N·s/m');
    expect(unitOfPath('body.leg_stiffness_N_per_m')).toBe('N/m');
    expect(unitOfPath('start.forward_speed_m_per_s')).toBe('m/s');
    expect(unitOfPath('body.gravity_m_per_s2')).toBe('m/s²');
    expect(unitOfPath('body.mass_kg')).toBe('kg');
  });
});

describe('opened files', () => {
  const context = { scenario: demoScenarioDraft() };
  const result = () => ({ format: 'pronk-result', kind: 'optimization', scenario: demoScenarioDraft(), parameters: [{ path: 'policy.angle.rate_deg_per_s', start: 40, value: 55 }] });

  it('tells a scenario, a study, a result and a project apart by what they are', () => {
    expect(classifyFile(JSON.stringify(demoScenarioDraft()), 'demo.json', context).kind).toBe('scenario');
    const study = classifyFile(JSON.stringify({ ...demoStudyDraft(), scenario_file: 'demo.json' }), 's.json', context);
    expect(study).toMatchObject({ kind: 'study', scenarioFile: 'demo.json', scenario: null });
    expect(classifyFile(JSON.stringify(studyFile(demoStudyDraft(), demoScenarioDraft())), 's.json', context)).toMatchObject({ kind: 'study', scenarioFile: null });
    expect(classifyFile(JSON.stringify(result()), 'r.json', context).kind).toBe('result');
    expect(classifyFile('{"format":"pronk-project","format_version":1,"scenario":{},"study":{}}', 'p.json', context).kind).toBe('project');
    // a JSON Schema reference is accepted and not kept
    const withSchema = classifyFile(JSON.stringify({ $schema: 'https://example.org/scenario.schema.json', ...demoScenarioDraft() }), 'demo.json', context);
    expect(withSchema.kind).toBe('scenario');
    expect(withSchema.kind === 'scenario' && Object.keys(withSchema.scenario)).not.toContain('$schema');
  });

  it('refuses a file that is none of them, with the reasons', () => {
    // the file of the defect report: a body with a word for its mass, nothing else
    const refuse = (text: string) => {
      try {
        classifyFile(text, 'x.json', context);
      } catch (error) {
        expect(error).toBeInstanceOf(InputError);
        return (error as InputError).format();
      }
      throw new Error(`accepted ${text}`);
    };
    const heavy = refuse('{"body":{"mass_kg":"heavy"}}');
    expect(heavy).toMatch(/^x\.json: not opened: it is not a scenario Pronk can run/);
    expect(heavy).toContain('the editors are unchanged');
    // the scenario validator's own words (src/core/scenario.ts)
    expect(heavy).toContain('x.json: body.mass_kg: expected a number from 1e-6 to 1e6 (kg), found "heavy"');
    expect(heavy).toMatch(/start: .*found missing/);
    expect(refuse('{"hello": 1}')).toMatch(/not a scenario/);
    expect(refuse('[1, 2]')).toMatch(/found \[1,2\]/);
    expect(refuse('{\n  "body": {,}\n}')).toMatch(/x\.json: invalid JSON at line 2, column 12/);
    expect(refuse('{"format":"pronk-partial"}')).toMatch(/format: expected "pronk-project" or "pronk-result"/);
    expect(refuse('{"format":"pronk-result","kind":"deadbeat"}')).toMatch(/a deadbeat result/);
    expect(refuse('{"format":"pronk-result","kind":"optimization","scenario":{}}')).toMatch(/damaged optimization result/);
    expect(refuse('{"format":"pronk-project","format_version":7,"scenario":{},"study":{}}')).toMatch(/format_version: expected an integer from 1 to 1, found 7/);
    expect(refuse('{"format":"pronk-project","format_version":1,"scenario":[]}')).toMatch(/scenario: expected an object/);
    // a study is checked in full: a free parameter the scenario does not have
    const study = { ...demoStudyDraft(), free_parameters: [{ path: 'policy.angle.attack_deg', lower: 50, upper: 70 }] };
    expect(refuse(JSON.stringify(study))).toMatch(/free_parameters\[0\]\.path/);
  });

  it('saves a study with its scenario inline, which the study validator accepts as it is', () => {
    const file = studyFile(demoStudyDraft(), demoScenarioDraft());
    expect(file.scenario_file).toBeUndefined();
    expect(checkStudy(file, file.scenario).issues).toEqual([]);
  });
});

describe('undo history', () => {
  const d = (mass: number) => ({ scenario: { body: { mass_kg: mass } }, study: {} });

  it('undoes and redoes steps in order, and a new change drops what could be redone', () => {
    const h = new History();
    h.record(d(1), 'Mass', 'a', 0);
    h.record(d(2), 'Mass', 'b', 10_000);
    expect(h.undo(d(3))!.drafts).toEqual(d(2));
    expect(h.undo(d(2))!.drafts).toEqual(d(1));
    expect(h.undo(d(1))).toBeNull();
    expect(h.redo(d(1))!.drafts).toEqual(d(2));
    h.record(d(2), 'Leg', 'c', 20_000);
    expect(h.future).toEqual([]);
  });

  it('makes a run of keystrokes in one field one step', () => {
    const h = new History();
    h.record(d(1), 'Mass', 'sc:body.mass_kg', 0);
    h.record(d(12), 'Mass', 'sc:body.mass_kg', COALESCE_MS / 2);
    h.record(d(123), 'Mass', 'sc:body.mass_kg', COALESCE_MS);
    expect(h.past.length).toBe(1);
    h.record(d(1234), 'Mass', 'sc:body.mass_kg', 4 * COALESCE_MS);
    expect(h.past.length).toBe(2);
    h.seal();
    h.record(d(5), 'Mass', 'sc:body.mass_kg', 4 * COALESCE_MS + 1);
    expect(h.past.length).toBe(3);
  });

  it('survives a JSON round trip (the reload) and drops damaged steps', () => {
    const h = new History();
    h.record(d(1), 'Mass', null, 0);
    const back = new History(JSON.parse(JSON.stringify(h.toJSON())));
    expect(back.undo(d(2))!.drafts).toEqual(d(1));
    expect(new History({ past: [{ label: 'x' } as never], future: [] }).past).toEqual([]);
  });
});

describe('issues as the editors show them', () => {
  it('marks both fields of a clamp whose lowest angle is above its steepest, by their labels', () => {
    const draft = demoScenarioDraft() as { policy: { angle: Record<string, unknown> } };
    draft.policy.angle.min_deg = 85;
    draft.policy.angle.max_deg = 70;
    const issues = explainIssues('sc', checkScenario(draft).issues, draft);
    const upper = issues.find((i) => i.path === 'policy.angle.max_deg')!;
    const lower = issues.find((i) => i.path === 'policy.angle.min_deg')!;
    expect(upper.label).toBe('Clamp: lowest angle and Clamp: steepest angle');
    expect(upper.message).toBe('must be above Clamp: lowest angle (85°); found 70°');
    expect(lower.message).toBe('must be below Clamp: steepest angle (70°); found 85°');
    expect(lower.partnerOf).toBe('policy.angle.max_deg');
  });

  it('marks both bounds of a free parameter and both ends of the limits\' angle range', () => {
    const study = demoStudyDraft() as { free_parameters: Record<string, unknown>[]; constraints: Record<string, unknown> };
    study.free_parameters[0].lower = 80;
    study.free_parameters[0].upper = 60;
    study.constraints.leg_angle_range_deg = { min_deg: 80, max_deg: 60 };
    const issues = explainIssues('st', checkStudy(study, demoScenarioDraft()).issues, study);
    const at = (p: string) => issues.find((i) => i.path === p)!;
    expect(at('free_parameters[0].lower').message).toBe('must be below Free parameter 1 (Attack angle at apex): upper bound (60); found 80');
    expect(at('free_parameters[0].upper').label).toBe('Free parameter 1 (Attack angle at apex): lower bound and Free parameter 1 (Attack angle at apex): upper bound');
    expect(at('constraints.leg_angle_range_deg.min_deg').message).toBe('must be below Touchdown angle, steepest (60°); found 80°');
    expect(at('constraints.leg_angle_range_deg.max_deg').message).toBe('must be above Touchdown angle, lowest (80°); found 60°');
  });

  it('names fields by their labels, not their paths', () => {
    expect(fieldLabel('sc', 'body.mass_kg')).toBe('Mass');
    expect(fieldLabel('sc', 'policy.angle.attack_deg[2]')).toBe('Angle table: attack angle, row 2');
    expect(fieldLabel('st', 'search.restarts')).toBe('Restarts');
    expect(fieldLabel('st', 'objective.terms[1].rollouts', demoStudyDraft())).toBe('Term 2 (Apex tracking): Rollouts');
  });
});

describe('margins to the limits', () => {
  it('as a percentage of each limit, the smallest one binding', () => {
    const rows = marginRows([
      { name: 'max_leg_force_N', bound: 'upper', value: 450, limit: 900, margin: 450 },
      { name: 'friction_coefficient', bound: 'upper', value: 0.72, limit: 0.8, margin: 0.08 },
      { name: 'leg_angle_range_deg.min_deg', bound: 'lower', value: null, limit: 55, margin: null },
    ]);
    expect(rows.map((r) => r.percent)).toEqual([50, expect.closeTo(10, 12), null]);
    expect(rows.map((r) => r.binding)).toEqual([false, true, false]);
    expect(rows[0].label).toBe('Peak leg force');
    // a margin past the limit is negative and binds
    expect(marginRows([{ name: 'max_leg_force_N', bound: 'upper', value: 990, limit: 900, margin: -90 }])[0]).toMatchObject({ percent: -10, binding: true });
  });
});

describe('two policies on the same terrain', () => {
  const row = (ok: boolean): RobustnessRow => ({
    status: ok ? 'completed' : 'body_hit_ground',
    strides_completed: ok ? 20 : 3,
    sum_sq_height_error_m2: 0,
    sum_sq_speed_error_m2_per_s2: 0,
  });
  // 10 terrains: both survive 5, only the candidate 3, only the baseline 1, neither 1
  const pattern: [boolean, boolean][] = [
    ...Array.from({ length: 5 }, () => [true, true] as [boolean, boolean]),
    ...Array.from({ length: 3 }, () => [false, true] as [boolean, boolean]),
    [true, false],
    [false, false],
  ];
  const baseline = pattern.map(([a]) => row(a));
  const candidate = pattern.map(([, b]) => row(b));

  it('counts the pairs and the difference candidate − baseline', () => {
    const p = pairSurvival(baseline, candidate);
    expect(p.pairs).toEqual({ both: 5, baseline_only: 1, candidate_only: 3, neither: 1 });
    expect(p.baseline.survival).toBe(0.6);
    expect(p.candidate.survival).toBe(0.8);
    expect(p.difference).toBeCloseTo(0.2, 15);
    expect(p.paired95[0]).toBeLessThan(p.difference);
    expect(p.paired95[1]).toBeGreaterThan(p.difference);
  });

  it('mirrors the interval when the two policies swap (law: the difference changes sign)', () => {
    const ab = pairSurvival(baseline, candidate);
    const ba = pairSurvival(candidate, baseline);
    expect(ba.difference).toBeCloseTo(-ab.difference, 15);
    expect(ba.paired95[0]).toBeCloseTo(-ab.paired95[1], 12);
    expect(ba.paired95[1]).toBeCloseTo(-ab.paired95[0], 12);
  });
});

describe('work split into ranges', () => {
  it('covers every item once, in order, in at most the asked number of ranges', () => {
    for (const [total, parts] of [[1, 12], [7, 3], [1681, 12], [12, 12]]) {
      const rs = ranges(total, parts);
      expect(rs.length).toBe(Math.min(total, parts));
      expect(rs[0].start).toBe(0);
      expect(rs[rs.length - 1].end).toBe(total);
      rs.forEach((r, i) => i > 0 && expect(r.start).toBe(rs[i - 1].end));
    }
  });
});
