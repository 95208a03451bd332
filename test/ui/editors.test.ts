// @vitest-environment happy-dom
// The workbench's editors: every invalid value is flagged beside its field with the validator's
// own reason (parseScenario / parseStudy issues, mapped by path), kept as typed, never silently
// accepted; the editor's summary says that the computations use the last valid scenario.
import { fireEvent, render, screen, within } from '@testing-library/svelte';
import { beforeEach, describe, expect, it } from 'vitest';
import Editor from '../../src/ui/components/Editor.svelte';
import { Workbench } from '../../src/ui/lib/workbench.svelte.js';
import type { EnginePool } from '../../src/worker/browser-pool.js';

// The editors never compute: a pool that is never called.
const idlePool = { size: 1, dispose() {} } as unknown as EnginePool;

function setup() {
  const wb = new Workbench({ pool: idlePool });
  const view = render(Editor, { props: { wb } });
  return { wb, view };
}

/** The message linked to an input by aria-describedby (the text beside the field). */
function describedBy(input: HTMLElement): string {
  const ids = (input.getAttribute('aria-describedby') ?? '').split(/\s+/).filter(Boolean);
  return ids.map((id) => document.getElementById(id)?.textContent ?? '').join(' ').trim();
}

function type(input: HTMLElement, text: string) {
  fireEvent.input(input, { target: { value: text } });
  fireEvent.blur(input);
}

/** Lets the promises and effects of an interaction run. */
async function settle() {
  for (let i = 0; i < 5; i++) await new Promise((r) => setTimeout(r, 0));
}

beforeEach(() => {
  localStorage.clear();
  document.body.innerHTML = '';
});

describe('scenario editor', () => {
  it('shows the demo scenario as valid, with a unit beside every number', () => {
    const { view } = setup();
    expect(screen.getByTestId('scenario-check').textContent).toMatch(/Scenario valid/);
    const mass = screen.getByLabelText('Mass') as HTMLInputElement;
    expect(mass.value).toBe('9'); // scenarios/demo.json: mass_kg 9
    expect(mass.closest('.field')?.textContent).toContain('kg');
    expect((screen.getByLabelText('Leg stiffness').closest('.field') as HTMLElement).textContent).toContain('N/m');
    // the angle convention is stated in the editor
    expect(view.container.textContent).toMatch(/from the horizontal.*90° is a vertical leg/s);
  });

  it('flags a negative mass beside the field with the validator\'s reason, and keeps it as typed', async () => {
    const { wb } = setup();
    const mass = screen.getByLabelText('Mass');
    type(mass, '-9');
    await Promise.resolve();
    // the message of src/core/scenario.ts's positive('kg') field schema, as parseScenario reports it
    expect(mass.getAttribute('aria-invalid')).toBe('true');
    expect(describedBy(mass)).toBe('expected a number from 1e-6 to 1e6 (kg), found -9');
    expect(wb.scenarioDraft.body).toMatchObject({ mass_kg: -9 });
    expect(wb.scenarioCheck.value).toBeNull();
    const summary = screen.getByTestId('scenario-check').textContent ?? '';
    expect(summary).toMatch(/1 problem in the scenario/);
    expect(summary).toMatch(/Computations use the last valid scenario/);
    // the summary names the field by the label on screen, not by its path in the file
    expect(summary).toContain('Mass: expected a number from 1e-6 to 1e6 (kg), found -9');
    expect(summary).not.toContain('body.mass_kg');
  });

  it('shows a field\'s problem while the field has the focus', async () => {
    setup();
    const mass = screen.getByLabelText('Mass');
    type(mass, '-9');
    await Promise.resolve();
    fireEvent.focus(mass);
    await Promise.resolve();
    expect(mass.getAttribute('aria-invalid')).toBe('true');
    expect(describedBy(mass)).toBe('expected a number from 1e-6 to 1e6 (kg), found -9');
  });

  it('marks both clamp fields when the lowest angle is above the steepest', async () => {
    const { wb } = setup();
    const lowest = screen.getByLabelText('Clamp: lowest angle');
    const steepest = screen.getByLabelText('Clamp: steepest angle');
    type(lowest, '85'); // the demo's clamp is at most 80° (scenarios/demo.json)
    await Promise.resolve();
    expect(describedBy(lowest)).toBe('must be below Clamp: steepest angle (80°); found 85°');
    expect(describedBy(steepest)).toBe('must be above Clamp: lowest angle (85°); found 80°');
    expect(lowest.getAttribute('aria-invalid')).toBe('true');
    expect(steepest.getAttribute('aria-invalid')).toBe('true');
    // one problem, named by both labels
    const summary = screen.getByTestId('scenario-check').textContent ?? '';
    expect(summary).toMatch(/1 problem in the scenario/);
    expect(summary).toContain('Clamp: lowest angle and Clamp: steepest angle: 85 is not below 80');
    expect(wb.scenarioCheck.issues).toHaveLength(1);
  });

  it('keeps text that is not a number and reports what it found', async () => {
    setup();
    const stiffness = screen.getByLabelText('Leg stiffness');
    type(stiffness, '5 kN/m');
    await Promise.resolve();
    expect(describedBy(stiffness)).toBe('expected a number from 1e-3 to 1e12 (N/m), found "5 kN/m"');
    expect((stiffness as HTMLInputElement).value).toBe('5 kN/m');
  });

  it('leaves an emptied optional field out, so that its default applies', async () => {
    const { wb } = setup();
    type(screen.getByLabelText('Gravity'), '');
    await Promise.resolve();
    expect('gravity_m_per_s2' in (wb.scenarioDraft.body as object)).toBe(false);
    // the schema's default: standard gravity, 9.80665 m/s² (CGPM 1901, exact)
    expect(wb.scenarioCheck.value?.body.gravity_m_per_s2).toBe(9.80665);
  });

  it('puts the cross-field start-height rule on the apex height field', async () => {
    setup();
    const apex = screen.getByLabelText('Start apex height');
    type(apex, '0.3');
    await Promise.resolve();
    // law: the leg touches down at y = L0·sin(attack at apex) = 0.45 m · sin(64°) = 0.404456 m
    const text = describedBy(apex);
    expect(text).toMatch(/^expected > 0\.40445\d* m \(ground \+ leg length \* sin\(attack at apex\)\), found 0\.3$/);
    expect(Number(/> ([\d.]+) m/.exec(text)![1])).toBeCloseTo(0.45 * Math.sin((64 * Math.PI) / 180), 5);
  });

  it('edits a table as rows and flags a knot time that does not increase in its own cell', async () => {
    const { wb } = setup();
    fireEvent.change(screen.getByLabelText('Touchdown angle'), { target: { value: 'time_table' } });
    await settle();
    // the demo study sets retraction parameters free: asked, and they go
    expect(wb.question?.title).toBe('The study uses the old policy');
    wb.respond('drop');
    await settle();
    // the kind switch starts the table from the apex angle of the retraction policy (64°)
    expect(wb.scenarioDraft.policy).toMatchObject({ angle: { kind: 'time_table', time_since_apex_s: [0, 0.2], attack_deg: [64, 64] } });
    const time1 = screen.getByLabelText('Time since apex, row 1');
    type(time1, '0');
    await Promise.resolve();
    expect(describedBy(time1)).toBe('expected a time > 0 s (knot times must strictly increase), found 0');
    fireEvent.click(screen.getByRole('button', { name: 'Add row' }));
    await Promise.resolve();
    const angle = wb.scenarioDraft.policy as { angle: { time_since_apex_s: unknown[]; attack_deg: unknown[] } };
    expect(angle.angle.time_since_apex_s).toHaveLength(3);
    expect(angle.angle.attack_deg).toHaveLength(3);
    fireEvent.click(screen.getByRole('button', { name: 'Remove row 0' }));
    await Promise.resolve();
    expect(angle.angle.attack_deg).toHaveLength(2);
  });

  it('brings back the values of a kind when switched back to it', async () => {
    const { wb } = setup();
    const kind = screen.getByLabelText('Touchdown angle');
    fireEvent.change(kind, { target: { value: 'fixed' } });
    await settle();
    wb.respond('drop');
    await settle();
    expect(wb.scenarioDraft.policy).toMatchObject({ angle: { kind: 'fixed', attack_deg: 64 } });
    fireEvent.change(kind, { target: { value: 'retraction' } });
    await settle();
    expect(wb.question).toBeNull(); // the study no longer names anything of the fixed policy
    // scenarios/demo.json: retraction at 64° from the apex, 40°/s, clamped at 80°
    expect(wb.scenarioDraft.policy).toMatchObject({ angle: { kind: 'retraction', attack_at_apex_deg: 64, rate_deg_per_s: 40, max_deg: 80 } });
  });

  it('takes the user to the field a problem names', async () => {
    setup();
    type(screen.getByLabelText('Start forward speed'), '-1');
    await Promise.resolve();
    const summary = screen.getByTestId('scenario-check');
    fireEvent.click(within(summary).getByRole('button', { name: /^Start forward speed:/ }));
    expect(document.activeElement).toBe(screen.getByLabelText('Start forward speed'));
  });
});

describe('study editor', () => {
  // the study editor is put together in the task after the page's first (Editor.svelte)
  const studyShown = () => screen.findByLabelText('Touchdown angle, steepest');

  it('reports half an angle range at its missing end', async () => {
    const { wb } = setup();
    const steepest = await studyShown();
    type(steepest, '');
    await Promise.resolve();
    // src/core/optimize/study.ts: leg_angle_range_deg {min_deg, max_deg}, both angles in [0.01, 90]
    expect(describedBy(steepest)).toBe('expected an angle from 0.01 to 90 (deg from the horizontal), found missing');
    expect(wb.studyCheck.value).toBeNull();
    // emptying the other end too leaves the range out of the study: valid again
    type(screen.getByLabelText('Touchdown angle, lowest'), '');
    await Promise.resolve();
    expect(wb.studyCheck.issues).toEqual([]);
    expect(wb.studyCheck.value?.constraints.leg_angle_range_deg).toBeUndefined();
  });

  it('asks what to do when a policy kind switch would leave the study naming parameters of the old kind', async () => {
    const { wb } = setup();
    const kind = screen.getByLabelText('Touchdown angle') as HTMLSelectElement;
    fireEvent.change(kind, { target: { value: 'fixed' } });
    await settle();
    // scenarios/demo-study.json sets the retraction's apex angle, rate and clamp free
    expect(wb.question?.text).toMatch(/free parameters 1 \(Attack angle at apex\), 2 \(Retraction rate\), 3 \(Clamp: steepest angle\) belong to the retraction policy/);
    expect(wb.question?.choices.map((c) => c.id)).toEqual(['drop', 'keep']);
    // keep: nothing changes, and the select shows the kind in use again
    wb.respond('keep');
    await settle();
    expect((wb.scenarioDraft.policy as { angle: { kind: string } }).angle.kind).toBe('retraction');
    expect(kind.value).toBe('retraction');
    expect(wb.studyCheck.issues).toEqual([]);
    // drop: the new kind, and the study without those free parameters (one undo step brings both back)
    fireEvent.change(kind, { target: { value: 'fixed' } });
    await settle();
    wb.respond('drop');
    await settle();
    expect((wb.scenarioDraft.policy as { angle: { kind: string } }).angle.kind).toBe('fixed');
    expect(wb.studyDraft.free_parameters).toEqual([]);
    wb.undo();
    await settle();
    expect((wb.scenarioDraft.policy as { angle: { kind: string } }).angle.kind).toBe('retraction');
    expect(wb.studyDraft.free_parameters).toHaveLength(3);
  });

  it('marks both bounds of a free parameter whose lower bound is above its upper', async () => {
    setup();
    await studyShown();
    const upper = screen.getAllByLabelText('Upper bound')[0];
    const lower = screen.getAllByLabelText('Lower bound')[0];
    type(upper, '50'); // below the lower bound, 55 (scenarios/demo-study.json)
    await Promise.resolve();
    expect(describedBy(upper)).toBe('must be above Free parameter 1 (Attack angle at apex): lower bound (55); found 50');
    expect(describedBy(lower)).toBe('must be below Free parameter 1 (Attack angle at apex): upper bound (50); found 55');
    expect(lower.getAttribute('aria-invalid')).toBe('true');
  });

  it('marks both ends of the limits\' touchdown angle range', async () => {
    setup();
    await studyShown();
    const lowest = screen.getByLabelText('Touchdown angle, lowest');
    const steepest = screen.getByLabelText('Touchdown angle, steepest');
    type(lowest, '88'); // above the demo study's steepest, 85°
    await Promise.resolve();
    expect(describedBy(lowest)).toBe('must be below Touchdown angle, steepest (85°); found 88°');
    expect(describedBy(steepest)).toBe('must be above Touchdown angle, lowest (88°); found 85°');
  });
});

describe('undo and redo', () => {
  it('undoes a run of typing in one field in one step, and redoes it', async () => {
    const { wb } = setup();
    const mass = screen.getByLabelText('Mass') as HTMLInputElement;
    for (const text of ['1', '12', '12.5']) fireEvent.input(mass, { target: { value: text } });
    await settle();
    expect((wb.scenarioDraft.body as { mass_kg: number }).mass_kg).toBe(12.5);
    wb.undo();
    await settle();
    expect((wb.scenarioDraft.body as { mass_kg: number }).mass_kg).toBe(9);
    // the focused field shows the undone value too
    expect(mass.value).toBe('9');
    wb.redo();
    await settle();
    expect(mass.value).toBe('12.5');
  });
});
