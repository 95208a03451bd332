// The optimizer for every model kind, end to end in Debian's headless Chromium against `vite
// preview`: the two-legged walker's and the six-legged runner's demos load with their own studies
// (scenarios/demo-biped-study.json, demo-hexapod-study.json: only the limits and terms the kind's
// search has, no study problem), a short search runs in the workers, and its result is the one
// Node's search gives for the same study (src/worker/node-optimize.ts: the same core search, the
// result the same on any number of workers, timings aside); the result file and the export
// download. Opening a scenario of another kind fits the study to it. Screenshots at 1440 × 900 go
// to test-output/screenshots/.
//
// Skipped, with the reason printed, when /usr/bin/chromium is absent.

import type { Page } from 'playwright-core';
import { describe, expect, it } from 'vitest';
import demo from '../../scenarios/demo.json' with { type: 'json' };
import demoBiped from '../../scenarios/demo-biped.json' with { type: 'json' };
import demoBipedStudy from '../../scenarios/demo-biped-study.json' with { type: 'json' };
import demoHexapod from '../../scenarios/demo-hexapod.json' with { type: 'json' };
import demoHexapodStudy from '../../scenarios/demo-hexapod-study.json' with { type: 'json' };
import { buildExport } from '../../src/core/export/build.js';
import { parseResult } from '../../src/core/export/input.js';
import { buildLateralExport } from '../../src/core/export/lateral.js';
import { hex32 } from '../../src/core/export/lookup.js';
import { parseLateralScenario } from '../../src/core/models/lateral.js';
import { parseStudy } from '../../src/core/optimize/study.js';
import { optimizeStudy } from '../../src/worker/node-optimize.js';
import { CHROMIUM, haveChromium } from './harness.mjs';
import { pageTools, workbenchSession } from './page.js';

const available = haveChromium();
if (!available) console.warn(`e2e: skipped: ${CHROMIUM} is absent (install it with: apt-get update && apt-get install -y chromium)`);

type Json = Record<string, unknown>;

/** A demo study made small (the same edits the test types into the study editor). */
function small(study: Json, scenario: unknown, termRollouts: number): Json {
  const { scenario_file: _file, ...s } = structuredClone(study);
  (s.objective as { terms: Json[] }).terms.forEach((t) => (t.rollouts = termRollouts));
  return { ...s, scenario, search: { ...(s.search as Json), max_evaluations: 4, restarts: 1 }, holdout: { ...(s.holdout as Json), rollouts: 40 } };
}

describe.skipIf(!available)('the optimizer for every model kind in the workbench', () => {
  let page: Page;
  const pageErrors: string[] = [];
  workbenchSession((p) => {
    page = p;
  }, pageErrors, { waitForMap: true });
  const t = pageTools(() => page);


  const loadDemo = async (name: string) => {
    await page.getByTestId('demo-menu').click();
    await page.getByTestId(`demo-${name}`).click();
    if (await page.getByTestId('ask').isVisible()) await page.getByTestId('ask-replace').click();
  };
  const studyField = (path: string) => page.locator(`#st-${path.replace(/[^A-Za-z0-9_]+/g, '-').replace(/-+$/, '')}`);
  const setStudy = async (path: string, value: string) => {
    await studyField(path).fill(value);
    await studyField(path).press('Tab');
  };
  const limitIds = () => page.locator('[id^="st-constraints-"]').evaluateAll((els) => els.map((e) => e.id));
  const noStudyProblems = async () => {
    const check = (await page.getByTestId('scenario-check').textContent()) ?? '';
    expect(check).not.toMatch(/in the study/);
    expect(await page.locator('[id^="st-"][aria-invalid="true"]').count()).toBe(0);
    expect(await page.getByTestId('study-misfit').count()).toBe(0);
  };
  const runSearch = async () => {
    await t.view('optimize');
    expect(await page.locator('#tab-optimize').getAttribute('aria-disabled')).toBeNull();
    await page.getByTestId('start-optimize').click();
    // a result for this scenario (an earlier one, of another scenario, is shown as such until then)
    const current = () => page.locator('[role=tabpanel]').getByTestId('provenance').first().getAttribute('data-current').catch(() => null);
    await expect.poll(current, { timeout: 180_000 }).toBe('true');
    await expect.poll(() => page.getByTestId('optimize-outcome').textContent(), { timeout: 20_000 }).toMatch(/^\s*Finished\.\s+\d+ evaluations/);
    await expect.poll(() => t.revision('figure-convergence'), { timeout: 20_000 }).toBeGreaterThan(0);
    const convergence = (await t.option('figure-convergence')).series as { data: unknown[] }[];
    expect(convergence.some((s) => s.data.length > 0)).toBe(true);
    const saved = await t.download(() => page.getByTestId('optimize-save-result').click());
    expect(saved.name).toMatch(/\.result\.json$/);
    return JSON.parse(saved.bytes.toString('utf8')) as Json;
  };
  const sameSearch = (browserResult: Json, node: Json) => {
    // the same search in Node: the policy, parameters, scores and limits, timings aside
    for (const key of ['model', 'scenario', 'policy', 'parameters', 'scores', 'constraints', 'best_restart']) expect(browserResult[key]).toEqual(node[key]);
    const summary = (r: Json) => ({ ...(r.summary as Json), restarts: undefined });
    expect(summary(browserResult)).toEqual(summary(node));
  };

  it('loads the two-legged walker with its study: the two-leg limits only, no study problem', async () => {
    await loadDemo('biped-walk');
    await expect.poll(() => t.field('Model').inputValue()).toBe('biped');
    const ids = (await limitIds()).join(' ');
    expect(ids).toContain('max_vertical_force_N');
    expect(ids).not.toContain('friction_coefficient');
    await noStudyProblems();
    // scenarios/demo-biped-study.json's limits, in the editor
    expect(await studyField('constraints.max_vertical_force_N').inputValue()).toBe('850');
    expect(await studyField('constraints.max_leg_force_N').inputValue()).toBe('600');
  });

  it('runs a short two-leg search in the workers: the same result as Node, saved and exported', async () => {
    await setStudy('objective.terms[0].rollouts', '12');
    await setStudy('objective.terms[1].rollouts', '12');
    await setStudy('search.max_evaluations', '4');
    await setStudy('search.restarts', '1');
    await setStudy('holdout.rollouts', '40');
    await noStudyProblems();
    const result = await runSearch();
    expect(result.model).toBe('biped');
    const rows = page.getByTestId('optimized-parameters').locator('tbody tr');
    expect(await rows.count()).toBe(2);
    expect(await rows.first().locator('td').first().getAttribute('title')).toBe('policy.angle.attack_deg');
    // the walker's limits at the best point, the total vertical force among them
    const margins = await page.getByTestId('limit-margins').locator('tbody td.label').evaluateAll((els) => els.map((e) => e.getAttribute('data-value')));
    expect(margins).toEqual(expect.arrayContaining(['max_leg_force_N', 'max_vertical_force_N', 'max_compression_fraction']));
    expect(await page.getByTestId('holdout-term').count()).toBe(2);
    await t.shot('biped-optimizer');
    const node = await optimizeStudy(parseStudy(small(demoBipedStudy, demoBiped, 12)), { workers: 1 });
    sameSearch(result, JSON.parse(JSON.stringify(node)) as Json);

    // the export of the optimized two-leg policy (tables per `pronk export`)
    await page.getByTestId('optimize-export').click();
    const dialog = page.getByTestId('export-dialog');
    await expect.poll(() => dialog.isVisible()).toBe(true);
    expect(await dialog.getByLabel(/The optimized policy/).isChecked()).toBe(true);
    await dialog.getByLabel(/JSON \(pronk-policy/).check();
    // a walker with a fixed attack angle: the table must be told where it ends (as pronk export --t-max)
    await dialog.getByTestId('export-run').click();
    await expect.poll(() => dialog.getByRole('alert').textContent()).toMatch(/needs t_max_s/);
    await dialog.getByLabel('Table end, t_max_s (s)').fill('0.5');
    const exported = await t.download(() => dialog.getByTestId('export-run').click());
    const policy = JSON.parse(exported.bytes.toString('utf8')) as Json;
    expect(policy.format).toBe('pronk-policy');
    expect(policy.model).toBe('biped');
    // the same exporter in Node on the same result file (src/core/export/)
    const nodeExport = buildExport(await parseResult(result, 'x.result.json'), { t_max_s: 0.5 });
    expect(policy.float32_crc32).toBe(hex32(nodeExport.crc32));
    await page.keyboard.press('Escape');
    expect(pageErrors.join('\n')).toBe('');
  }, 300_000);

  it('loads the six-legged runner with its study: the lateral limits and the recovery term only', async () => {
    await loadDemo('hexapod');
    await expect.poll(() => t.field('Model').inputValue()).toBe('lateral');
    const names = [...new Set((await limitIds()).map((id) => id.split('-')[2]))].sort();
    expect(names).toEqual(['max_compression_fraction', 'max_leg_force_N']);
    await noStudyProblems();
    expect(await studyField('objective.terms[0].kind').inputValue()).toBe('recovery');
    expect(await page.locator('#st-model-mismatch-on').count()).toBe(0);
    // the study's force limit on the top view's strides: the demo runs under its 32 N; a limit just
    // below the largest stride peak marks exactly the strides above it
    await t.view('stride');
    await expect.poll(() => page.getByTestId('lateral-limit').textContent(), { timeout: 30_000 }).toMatch(/peak leg force 32 N/);
    const peaks = page.locator('[role=tabpanel] tbody tr td:nth-child(6)');
    await expect.poll(() => peaks.count(), { timeout: 30_000 }).toBeGreaterThan(0);
    expect(await page.locator('[role=tabpanel] td.over').count()).toBe(0);
    const values = (await peaks.evaluateAll((els) => els.map((e) => Number(e.getAttribute('data-value'))))) as number[];
    const limit = Number((Math.max(...values) - 1e-3).toFixed(3));
    await setStudy('constraints.max_leg_force_N', String(limit));
    await expect.poll(() => page.locator('[role=tabpanel] td.over').count()).toBe(values.filter((v) => v > limit).length);
    expect(values.filter((v) => v > limit).length).toBeGreaterThan(0);
    await t.shot('lateral-stride-limit');
    await setStudy('constraints.max_leg_force_N', '32');
  });

  it('runs a short lateral search in the workers: the same result as Node, saved and its values exported', async () => {
    await setStudy('objective.terms[0].rollouts', '12');
    await setStudy('search.max_evaluations', '4');
    await setStudy('search.restarts', '1');
    await setStudy('holdout.rollouts', '40');
    await noStudyProblems();
    const result = await runSearch();
    expect(result.model).toBe('lateral');
    expect(await page.getByTestId('optimized-parameters').locator('tbody tr').count()).toBe(3);
    expect(await page.getByTestId('holdout-term').first().getAttribute('data-kind')).toBe('recovery');
    await t.shot('lateral-optimizer');
    const node = await optimizeStudy(parseStudy(small(demoHexapodStudy, demoHexapod, 12)), { workers: 1 });
    sameSearch(result, JSON.parse(JSON.stringify(node)) as Json);

    // the optimized lateral values, as `pronk export` writes a lateral scenario's
    await page.getByTestId('optimize-export').click();
    const dialog = page.getByTestId('export-dialog');
    await expect.poll(() => dialog.isVisible()).toBe(true);
    expect(await dialog.getByTestId('export-lateral').isVisible()).toBe(true);
    await dialog.getByLabel(/JSON \(pronk-policy, model lateral/).check();
    const exported = await t.download(() => dialog.getByTestId('export-run').click());
    const values = JSON.parse(exported.bytes.toString('utf8')) as Json;
    const expected = await buildLateralExport(parseLateralScenario(result.scenario), 'x.json', result.scenario);
    expect(values.model).toBe('lateral');
    expect(values.float32_crc32).toBe(hex32(expected.crc32));
    // the optimized stiffness, as found
    const k = (result.parameters as { path: string; value: number }[]).find((p) => p.path === 'body.leg_stiffness_N_per_m')!;
    expect((values.values as Record<string, { float64: number }>).leg_stiffness_n_per_m.float64).toBe(k.value);
    await page.keyboard.press('Escape');
    expect(pageErrors.join('\n')).toBe('');
  }, 300_000);

  it('opening a scenario of another kind fits the study to it, and says what it dropped', async () => {
    await t.open('tamarack.json', JSON.stringify(demo));
    // the study has edits in no file (the budget typed above): asked first
    await page.getByTestId('ask').waitFor();
    expect(await page.getByTestId('ask').textContent()).toContain('Replace the unsaved edits?');
    await page.getByTestId('ask-replace').click();
    await expect.poll(() => t.field('Model').inputValue()).toBe('slip');
    // the lateral study's two limits stay; its recovery term and its touchdown angle to the body axis go
    await expect.poll(() => t.notices()).toMatch(/The study now fits the single-leg model: it drops term 1 \(kick recovery\)/);
    await noStudyProblems();
    expect((await limitIds()).join(' ')).toContain('friction_coefficient');
    await t.shot('study-fitted');
  });
});
