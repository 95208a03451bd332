// @vitest-environment happy-dom
// Every model kind in the workbench: the model-kind choice in the scenario editor (asking before a
// switch drops fields), the two-leg fields with their validation beside them, the views a kind
// does not run disabled with their reason, and the gait column's words and glyphs.
import { fireEvent, render, screen } from '@testing-library/svelte';
import { beforeEach, describe, expect, it } from 'vitest';
import demoBiped from '../../scenarios/demo-biped.json' with { type: 'json' };
import demoHexapod from '../../scenarios/demo-hexapod.json' with { type: 'json' };
import { classifyFile } from '../../src/ui/lib/files.js';
import Editor from '../../src/ui/components/Editor.svelte';
import type { BipedStride } from '../../src/core/models/biped-simulate.js';
import { parseScenario } from '../../src/core/scenario.js';
import { strideGaits } from '../../src/ui/lib/gait.js';
import { draftKind, draftOfKind, lostBySwitch, viewUnsupported } from '../../src/ui/lib/kinds.js';
import { checkScenario, Workbench } from '../../src/ui/lib/workbench.svelte.js';
import type { EnginePool } from '../../src/worker/browser-pool.js';

const idlePool = { size: 1, dispose() {} } as unknown as EnginePool;

function setup() {
  const wb = new Workbench({ pool: idlePool });
  const view = render(Editor, { props: { wb } });
  return { wb, view };
}

function describedBy(input: HTMLElement): string {
  const ids = (input.getAttribute('aria-describedby') ?? '').split(/\s+/).filter(Boolean);
  return ids.map((id) => document.getElementById(id)?.textContent ?? '').join(' ').trim();
}

function type(input: HTMLElement, text: string) {
  fireEvent.input(input, { target: { value: text } });
  fireEvent.blur(input);
}

async function settle() {
  for (let i = 0; i < 5; i++) await new Promise((r) => setTimeout(r, 0));
}

beforeEach(() => {
  localStorage.clear();
  document.body.innerHTML = '';
});

describe('model kind in the scenario editor', () => {
  it('switches the single-leg demo to two legs without a question (nothing is lost), then edits a leg', async () => {
    const { wb } = setup();
    expect(screen.queryByTestId('legs-section')).toBeNull();
    fireEvent.change(screen.getByLabelText('Model'), { target: { value: 'biped' } });
    await settle();
    expect(wb.question).toBeNull();
    expect(wb.scenarioDraft.model).toBe('biped');
    expect(wb.scenarioDraft.start).toMatchObject({ gait: 'walking', leg: 'left', offset_m: 0 });
    expect(screen.getByTestId('legs-section')).toBeTruthy();
    // a weaker right leg: the draft gets the per-leg field of models/biped.ts
    const factor = screen.getByLabelText('Right leg: stiffness factor');
    type(factor, '0.8');
    await Promise.resolve();
    expect(wb.scenarioDraft.legs).toEqual({ right: { stiffness_scale: 0.8 } });
    // a factor out of range is flagged beside the field with the validator's bound (STIFFNESS_SCALE_BOUND)
    type(factor, '-1');
    await Promise.resolve();
    expect(factor.getAttribute('aria-invalid')).toBe('true');
    expect(describedBy(factor)).toMatch(/^expected a number from 1e-3 to 1000 \(factor on the stiffness policy\), found -1$/);
    const summary = screen.getByTestId('scenario-check').textContent ?? '';
    expect(summary).toContain('Right leg: stiffness factor: expected');
    expect(summary).not.toContain('legs.right.stiffness_scale');
    // the JSON path is the field's tooltip
    expect(screen.getByText('Right leg: stiffness factor').getAttribute('title')).toBe('legs.right.stiffness_scale in the file');
    expect(screen.getByText('Model').getAttribute('title')).toBe('model in the file');
  });

  it('asks before a switch drops fields, and keeping leaves the draft as it was', async () => {
    const { wb } = setup();
    await wb.switchModelKind('biped');
    wb.setScenarioField('legs.left.leg_length_m', 0.5);
    const before = JSON.stringify(wb.scenarioDraft);
    fireEvent.change(screen.getByLabelText('Model'), { target: { value: 'lateral' } });
    await settle();
    expect(wb.question?.title).toBe('Switch to the lateral model?');
    // named by the labels on screen
    expect(wb.question?.text).toContain('Legs');
    expect(wb.question?.text).toContain('Ground');
    expect(wb.question?.text).toContain('Start gait');
    wb.respond('keep');
    await settle();
    expect(JSON.stringify(wb.scenarioDraft)).toBe(before);
    // switched: one undoable step back to the two-leg draft
    const switching = wb.switchModelKind('lateral');
    await settle();
    wb.respond('switch');
    expect(await switching).toBe(true);
    expect(wb.scenarioDraft.model).toBe('lateral');
    expect(wb.scenarioDraft.terrain).toBeUndefined();
    expect(screen.getByLabelText('Moment of inertia')).toBeTruthy();
    expect(screen.getByLabelText('Touchdown angle to body axis')).toBeTruthy();
    expect(screen.getByTestId('convention').textContent).toMatch(/to the body axis/);
    wb.undo();
    await settle();
    expect(JSON.stringify(wb.scenarioDraft)).toBe(before);
  });

  it('shows the two-leg start section: gait, stance leg, offset', async () => {
    const { wb } = setup();
    wb.loadScenarioDraft(structuredClone(demoBiped));
    await settle();
    expect(draftKind(wb.scenarioDraft)).toBe('biped');
    expect((screen.getByLabelText('Gait') as HTMLSelectElement).value).toBe('walking');
    expect((screen.getByLabelText('Stance leg') as HTMLSelectElement).value).toBe('left');
    // the walking start rule (models/biped.ts checkStart) lands on the apex height field: a start
    // beyond the leg's reach, sqrt(0.592^2 + 0.2^2) = 0.6249 m > 0.6 m (Pythagoras)
    type(screen.getByLabelText('Start offset, body − stance foot'), '0.2');
    await Promise.resolve();
    expect(describedBy(screen.getByLabelText('Start apex height'))).toMatch(/single-support apex the left leg reaches.*leg length 0\.624\d* m/);
    fireEvent.change(screen.getByLabelText('Gait'), { target: { value: 'running' } });
    await settle();
    expect(screen.getByLabelText('Landing leg')).toBeTruthy();
  });
});

describe('what each kind runs', () => {
  it('disables the views a kind does not run, with a one-line reason', () => {
    expect(viewUnsupported('slip', 'scan')).toBeNull();
    expect(viewUnsupported('biped', 'map')).toBeNull();
    expect(viewUnsupported('biped', 'stride')).toBeNull();
    expect(viewUnsupported('biped', 'basin')).toBeNull();
    expect(viewUnsupported('biped', 'optimize')).toBeNull();
    expect(viewUnsupported('lateral', 'optimize')).toBeNull();
    expect(viewUnsupported('lateral', 'scan')).toBeNull();
    expect(viewUnsupported('lateral', 'basin')).toBeNull();
    expect(viewUnsupported('biped', 'compare')).toMatch(/^the comparison: not in the workbench for the two-leg model yet/);
    expect(viewUnsupported('lateral', 'montecarlo')).toMatch(/not in the workbench for the lateral model/);
    expect(viewUnsupported('slip', 'recover')).toMatch(/for the lateral model only/);
  });

  it('refuses to run a view the kind does not run, with a notice', async () => {
    const wb = new Workbench({ pool: idlePool });
    wb.loadScenarioDraft(structuredClone(demoHexapod));
    wb.lastValid = { scenario: checkScenario(demoHexapod).value!, key: 'lateral', at: 0 };
    await wb.runMonteCarlo();
    expect(wb.results.montecarlo).toBeUndefined();
    expect(wb.notices.at(-1)?.text).toMatch(/^Monte Carlo on rough ground: not in the workbench for the lateral model/);
  });

  it('carries shared numbers over a switch and lists what a switch loses', () => {
    const biped = draftOfKind('biped', { body: { mass_kg: 9, leg_length_m: 0.45, leg_stiffness_N_per_m: 5000 }, start: { apex_height_m: 0.5, forward_speed_m_per_s: 2 }, policy: { angle: { kind: 'fixed', attack_deg: 66 }, stiffness: { kind: 'constant' } }, terrain: { kind: 'flat' }, strides: 10 });
    expect(biped.body).toEqual({ mass_kg: 9, leg_length_m: 0.45, leg_stiffness_N_per_m: 5000 });
    expect(() => parseScenario(biped)).not.toThrow();
    const lateral = draftOfKind('lateral', biped);
    // a slender body of the leg's length: m L^2 / 12 = 9 * 0.45^2 / 12 = 0.151875 kg m^2 (uniform rod, closed form)
    expect((lateral.body as { moment_of_inertia_kg_m2: number }).moment_of_inertia_kg_m2).toBeCloseTo(0.1519, 4);
    expect(lostBySwitch('lateral', biped)).toEqual(expect.arrayContaining(['terrain', 'start.gait', 'start.apex_height_m', 'policy.angle']));
    expect(lostBySwitch('biped', lateral)).toEqual(expect.arrayContaining(['body.moment_of_inertia_kg_m2', 'start.heading_to_body_deg']));
  });

  it('an apex accuracy goes with the switch to the lateral model (which has none) and stays between the other two', () => {
    const slip = {
      body: { mass_kg: 9, leg_length_m: 0.45, leg_stiffness_N_per_m: 5000 },
      start: { apex_height_m: 0.5, forward_speed_m_per_s: 2 },
      policy: { angle: { kind: 'fixed', attack_deg: 66 }, stiffness: { kind: 'constant' } },
      terrain: { kind: 'flat' },
      strides: 10,
      integrator: { apex_accuracy_m: 1e-8 },
    };
    const biped = draftOfKind('biped', slip);
    expect(biped.integrator).toEqual({ apex_accuracy_m: 1e-8 });
    expect(lostBySwitch('biped', slip)).not.toContain('integrator.apex_accuracy_m');
    expect(() => parseScenario(biped)).not.toThrow();
    expect(lostBySwitch('lateral', slip)).toContain('integrator.apex_accuracy_m');
    expect(draftOfKind('lateral', slip).integrator).toBeUndefined();
  });
});

describe('gait per stride', () => {
  const stride = (index: number, gait: BipedStride['gait']) => ({ index, gait }) as BipedStride;
  it('says walking, running or changed, each with a glyph', () => {
    const cells = strideGaits([stride(0, 'walking'), stride(1, 'walking'), stride(2, 'running'), stride(3, 'running')], 'walking');
    expect(cells.map((c) => c.word)).toEqual(['walking', 'walking', 'changed', 'running']);
    expect(cells[2].text).toBe('changed: walking → running');
    expect(new Set(cells.map((c) => c.glyph)).size).toBe(3);
    expect(strideGaits([stride(0, 'walking')], 'running')[0].word).toBe('changed');
  });
});

describe('the lateral model in the editor and in files', () => {
  it('edits a lateral scenario with its own fields, validated beside them', async () => {
    const { wb } = setup();
    wb.loadScenarioDraft(structuredClone(demoHexapod));
    await settle();
    expect(wb.scenarioCheck.issues).toEqual([]);
    expect((screen.getByLabelText('Moment of inertia') as HTMLInputElement).value).toBe('0.00675'); // scenarios/demo-hexapod.json
    expect(screen.queryByLabelText('Gravity')).toBeNull();
    expect(screen.queryByLabelText('Ground')).toBeNull();
    // the attachment point at most a leg length (0.08 m) from the centre of mass (models/lateral.ts)
    const d = screen.getByLabelText('Leg attachment offset d');
    type(d, '0.1');
    await Promise.resolve();
    expect(d.getAttribute('aria-invalid')).toBe('true');
    expect(describedBy(d)).toMatch(/^expected a number from -0\.08 to 0\.08 \(m; at most the leg length from the centre of mass\), found 0\.1$/);
    expect(screen.getByText('Leg attachment offset d').getAttribute('title')).toBe('body.attachment_offset_m in the file');
    type(screen.getByLabelText('Touchdown angle to body axis'), '95');
    await Promise.resolve();
    expect(describedBy(screen.getByLabelText('Touchdown angle to body axis'))).toMatch(/\(0, 90\]/);
  });

  it('opens scenario files of every kind, and refuses a broken lateral one with its reasons', () => {
    for (const scenario of [demoBiped, demoHexapod]) {
      expect(classifyFile(JSON.stringify(scenario), 'robot.json', { scenario: {} }).kind).toBe('scenario');
    }
    const broken = { ...structuredClone(demoHexapod), body: { ...demoHexapod.body, moment_of_inertia_kg_m2: -1 } };
    expect(() => classifyFile(JSON.stringify(broken), 'robot.json', { scenario: {} })).toThrow(/moment_of_inertia_kg_m2/);
  });
});

describe('the study follows the model kind (ui/lib/study-kinds.ts)', () => {
  const limitLabels = () => [...document.querySelectorAll('[id^="st-constraints"]')].map((el) => el.id);

  it('loads each demo with its kind’s demo study: no study problems, only the kind’s limits in the editor', async () => {
    const { wb } = setup();
    for (const [name, kind] of [['biped-walk', 'biped'], ['biped-run', 'biped'], ['hexapod', 'lateral'], ['slip', 'slip']] as const) {
      await wb.resetToDemo(name);
      await settle();
      expect(wb.question).toBeNull(); // nothing unsaved: no question
      expect(wb.studyCheck.issues).toEqual([]);
      expect(wb.studyMisfit).toEqual({ limits: [], terms: [], parameters: [], mismatch: false });
      expect(screen.queryByTestId('study-misfit')).toBeNull();
      const ids = limitLabels().join(' ');
      expect(ids.includes('friction_coefficient')).toBe(kind === 'slip');
      expect(ids.includes('max_vertical_force_N')).toBe(kind === 'biped');
      expect(ids.includes('leg_angle_range_deg')).toBe(kind !== 'lateral');
    }
  });

  it('asks before a demo of another kind replaces an edited study; undo brings it back', async () => {
    const { wb } = setup();
    wb.setStudyField('search.max_evaluations', 17);
    const loading = wb.resetToDemo('hexapod');
    await settle();
    expect(wb.question?.title).toBe('Replace the unsaved edits?');
    wb.respond('replace');
    await loading;
    expect((wb.studyDraft.objective as { terms: { kind: string }[] }).terms.map((t) => t.kind)).toEqual(['recovery']);
    wb.undo();
    expect(wb.scenarioDraft.model).toBeUndefined();
    expect((wb.studyDraft.search as { max_evaluations: number }).max_evaluations).toBe(17);
  });

  it('a switch of kind fits the study: says so, and asks first when that drops study edits', async () => {
    const { wb } = setup();
    // the demo study unedited: the friction limit goes without a question (it is in the demo), with a notice
    await wb.switchModelKind('biped');
    expect(wb.question).toBeNull();
    expect(wb.studyDraft.constraints).not.toHaveProperty('friction_coefficient');
    expect(wb.notices.at(-1)?.text).toMatch(/^The study now fits the two-leg model: it drops the friction limit/);
    expect(wb.studyCheck.issues).toEqual([]);
    // an edited study: asked, and keeping leaves both drafts as they were
    wb.setStudyField('constraints.max_leg_force_N', 500);
    const before = JSON.stringify([wb.scenarioDraft, wb.studyDraft]);
    const switching = wb.switchModelKind('lateral');
    await settle();
    expect(wb.question?.text).toMatch(/The study's search for the lateral model drops the touchdown angle range/);
    wb.respond('keep');
    expect(await switching).toBe(false);
    expect(JSON.stringify([wb.scenarioDraft, wb.studyDraft])).toBe(before);
  });

  it('opening a scenario of another kind fits the study; a study that does not fit offers the fit', async () => {
    const { wb } = setup();
    expect(await wb.openFile(JSON.stringify(demoHexapod), 'skitter.json')).toBe('scenario');
    expect(wb.studyCheck.issues).toEqual([]);
    expect(wb.notices.at(-1)?.text).toMatch(/^Opened the scenario skitter\.json\. The study now fits the lateral model: it drops/);
    // a scenario put in place without the fit (e.g. by a test or an old autosave): the editor says so and fits it
    wb.loadScenarioDraft(structuredClone(demoBiped));
    await settle();
    expect(wb.studyCheck.issues.length).toBeGreaterThan(0);
    expect(screen.getByTestId('study-misfit').textContent).toMatch(/the two-leg model's search does not run .*: fitted to it, the study drops term 1 \(kick recovery\)/);
    expect(screen.getByTestId('fit-study-summary').textContent).toBe('Fit it to the two-leg model');
    await fireEvent.click(screen.getByTestId('fit-study'));
    await settle();
    expect(wb.studyCheck.issues).toEqual([]);
    expect(screen.queryByTestId('study-misfit')).toBeNull();
  });
});

describe('an optimization result of another kind', () => {
  it('is not copied into a scenario of another kind (it names numbers that scenario has not)', async () => {
    const wb = new Workbench({ pool: idlePool });
    const lateralResult = { scenario: structuredClone(demoHexapod), parameters: [{ path: 'policy.angle.angle_to_body_deg', value: 61, start: 57 }] };
    wb.results = { optimization: { value: lateralResult, baseScenario: checkScenario(demoHexapod).value } as never };
    const before = JSON.stringify(wb.scenarioDraft);
    wb.applyOptimized();
    expect(JSON.stringify(wb.scenarioDraft)).toBe(before);
    expect(wb.notices.at(-1)?.text).toMatch(/^The optimized parameters belong to a lateral scenario and name Touchdown angle to body axis/);
    await wb.runComparison();
    expect(wb.notices.at(-1)?.text).toMatch(/^The comparison: not in the workbench for the lateral model yet/);
    // on its own kind's scenario: copied, one undoable step
    wb.loadScenarioDraft(structuredClone(demoHexapod));
    wb.applyOptimized();
    expect((wb.scenarioDraft.policy as { angle: { angle_to_body_deg: number } }).angle.angle_to_body_deg).toBe(61);
  });
});
