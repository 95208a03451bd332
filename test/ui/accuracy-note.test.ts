// @vitest-environment happy-dom
// The stride views' apex-accuracy line (components/views/AccuracyNote.svelte): absent when the
// scenario asked for no apex accuracy (the result then has no report); otherwise the accuracy and
// the tolerances it gave, with the measured error when a run calibrated them, and the report's
// definition as the title. The reports are the core's own (accuracyReport), not written out here.
import { render, screen } from '@testing-library/svelte';
import { beforeEach, describe, expect, it } from 'vitest';
import AccuracyNote from '../../src/ui/components/views/AccuracyNote.svelte';
import { accuracyReport, ACCURACY_DEFINITION, CALIBRATED_ACCURACY_DEFINITION } from '../../src/core/accuracy.js';

beforeEach(() => {
  document.body.innerHTML = '';
});

describe('the apex-accuracy line', () => {
  it('absent without an apex accuracy', () => {
    const { integrator } = accuracyReport({ relative_tolerance: 1e-10, absolute_tolerance: 1e-12 });
    render(AccuracyNote, { props: { report: integrator, testId: 'acc' } });
    expect(screen.queryByTestId('acc')).toBeNull();
  });

  it('the accuracy and the tolerances it gave, the definition as the title', () => {
    const { integrator } = accuracyReport({ apex_accuracy_m: 1e-8, relative_tolerance: 7.04e-10, absolute_tolerance: 7.04e-10 });
    render(AccuracyNote, { props: { report: integrator, testId: 'acc' } });
    const line = screen.getByTestId('acc');
    expect(line.textContent?.replace(/\s+/g, ' ').trim()).toBe('Apex accuracy 1.0e-8 m asked: rtol 7.0e-10, atol 7.0e-10 m.');
    expect(line.getAttribute('title')).toBe(ACCURACY_DEFINITION);
  });

  it('with a calibration: the error measured and over how many strides', () => {
    const { integrator } = accuracyReport(
      { apex_accuracy_m: 1e-8, relative_tolerance: 7.04e-10, absolute_tolerance: 7.04e-10 },
      { relative_tolerance: 1.26e-8, absolute_tolerance: 1.26e-8, calibrated_apex_error_m: 4.8e-9, calibration_strides: 60 },
    );
    render(AccuracyNote, { props: { report: integrator, testId: 'acc' } });
    const line = screen.getByTestId('acc');
    expect(line.textContent?.replace(/\s+/g, ' ').trim()).toBe('Apex accuracy 1.0e-8 m asked: rtol 1.3e-8, atol 1.3e-8 m; measured 4.8e-9 m over 60 strides.');
    expect(line.getAttribute('title')).toBe(CALIBRATED_ACCURACY_DEFINITION);
  });
});
