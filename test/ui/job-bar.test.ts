// @vitest-environment happy-dom
// The header's running jobs (components/JobBar.svelte): one entry per job with its progress and a
// cancel whose name says which job it stops; from four jobs on one entry for them all (their
// count, their mean progress, one cancel for all) so the header never runs past the window (the
// widths themselves are checked in a real browser, test/e2e/workbench.test.ts).
import { fireEvent, render, screen } from '@testing-library/svelte';
import { beforeEach, describe, expect, it } from 'vitest';
import JobBar from '../../src/ui/components/JobBar.svelte';
import { type Job, Workbench } from '../../src/ui/lib/workbench.svelte.js';
import type { EnginePool } from '../../src/worker/browser-pool.js';

const idlePool = { size: 1, dispose() {} } as unknown as EnginePool;

beforeEach(() => {
  document.body.innerHTML = '';
});

function job(label: string, done: number | null, total: number | null): Job {
  return { id: 1, label, startedAt: 0, done, total, detail: '', phase: '', cancelling: false, cancel: () => undefined };
}

function setup(jobs: Record<string, Job>) {
  const wb = new Workbench({ pool: idlePool });
  const cancelled: string[] = [];
  wb.cancel = (name: string) => {
    cancelled.push(name);
    wb.jobs[name].cancelling = true;
  };
  wb.jobs = jobs;
  render(JobBar, { props: { wb } });
  return { wb, cancelled };
}

describe('running jobs in the header', () => {
  it('up to three jobs: each with its own progress and a cancel named after it', async () => {
    const { cancelled } = setup({ montecarlo: job('Monte Carlo', 30, 100), basin: job('Basin of attraction', 5, 10) });
    expect(screen.getByTestId('job-montecarlo')).toBeTruthy();
    expect(screen.queryByTestId('job-summary')).toBeNull();
    await fireEvent.click(screen.getByRole('button', { name: 'Cancel Basin of attraction' }));
    expect(cancelled).toEqual(['basin']);
    expect(screen.getByRole('button', { name: 'Cancelling Basin of attraction' })).toHaveProperty('disabled', true);
  });

  it('four jobs: one entry, their count, the mean of their counted progress, and one cancel for all', async () => {
    const { cancelled } = setup({
      montecarlo: job('Monte Carlo', 30, 100),
      basin: job('Basin of attraction', 5, 10),
      scan: job('Stability scan', null, null), // not counted: no total
      optimize: job('Optimization', 10, 10),
    });
    expect(screen.queryByTestId('job-montecarlo')).toBeNull();
    const summary = screen.getByTestId('job-summary');
    expect(summary.textContent).toContain('4 jobs');
    expect(summary.getAttribute('title')).toBe('Monte Carlo\nBasin of attraction\nStability scan\nOptimization');
    // (0.3 + 0.5 + 1) / 3
    expect(Number((summary.querySelector('progress') as HTMLProgressElement).getAttribute('value'))).toBeCloseTo(0.6, 12);
    await fireEvent.click(screen.getByRole('button', { name: 'Cancel all' }));
    expect(cancelled).toEqual(['montecarlo', 'basin', 'scan', 'optimize']);
  });
});
