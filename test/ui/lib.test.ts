// The workbench's plain helpers: what a typed number becomes in the draft, where a field path
// leads, what an opened file is, and the pairing of two policies' rollouts on the same terrain.
import { describe, expect, it } from 'vitest';
import { InputError } from '../../src/core/errors.js';
import type { RobustnessRow } from '../../src/core/analysis/robustness.js';
import { pairSurvival, ranges } from '../../src/ui/lib/compute.js';
import { getAt, numberFromText, setAt } from '../../src/ui/lib/draft.js';
import { classifyFile, studyFile } from '../../src/ui/lib/files.js';
import { unitOfPath } from '../../src/ui/lib/fields.js';
import { fitOption } from '../../src/ui/lib/fit.js';
import { checkStudy, demoScenarioDraft, demoStudyDraft } from '../../src/ui/lib/workbench.svelte.js';

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
  it('tells a scenario, a study, a result and a project apart', () => {
    expect(classifyFile(JSON.stringify(demoScenarioDraft()), 'demo.json').kind).toBe('scenario');
    const study = classifyFile(JSON.stringify({ ...demoStudyDraft(), scenario_file: 'demo.json' }), 's.json');
    expect(study).toMatchObject({ kind: 'study', scenarioFile: 'demo.json', scenario: null });
    expect(classifyFile('{"format":"pronk-result","kind":"optimization"}', 'r.json').kind).toBe('result');
    expect(classifyFile('{"format":"pronk-project","format_version":1}', 'p.json').kind).toBe('project');
  });

  it('reports invalid JSON with its line and column, and an unknown object by its fields', () => {
    expect(() => classifyFile('{\n  "body": {,}\n}', 'bad.json')).toThrow(/bad\.json: invalid JSON at line 2, column 12/);
    expect(() => classifyFile('{"hello": 1}', 'odd.json')).toThrow(InputError);
    expect(() => classifyFile('[1, 2]', 'list.json')).toThrow(/found \[1,2\]/);
  });

  it('saves a study with its scenario inline, which the study validator accepts as it is', () => {
    const file = studyFile(demoStudyDraft(), demoScenarioDraft());
    expect(file.scenario_file).toBeUndefined();
    expect(checkStudy(file, file.scenario).issues).toEqual([]);
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

describe('figures in a narrow panel', () => {
  it('turns legends into one scrolling line and leaves everything else alone', () => {
    const option = { legend: { top: 96 }, title: { text: 't', subtext: 's' }, series: [{ id: 'a' }], xAxis: { name: 'x' } };
    const narrow = fitOption(option, 600, 1280) as typeof option & { legend: Record<string, unknown>; title: { subtextStyle: Record<string, unknown> } };
    expect(narrow.legend).toMatchObject({ top: 96, type: 'scroll' });
    expect(narrow.title.subtextStyle).toMatchObject({ overflow: 'truncate' });
    expect(narrow.series).toBe(option.series);
    expect(narrow.xAxis).toBe(option.xAxis);
    expect(fitOption(option, 1400, 1280)).toBe(option);
  });
});
