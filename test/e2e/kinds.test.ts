// Every model kind in the workbench, end to end in Debian's headless Chromium against `vite
// preview`: the two-legged walker demo loads; the model choice switches kinds (asking before it
// drops fields); a two-leg scenario is edited (a weaker right leg) and simulated in the workers,
// the stride view draws two legs and the per-leg vertical force plot with double support shaded,
// the section map lists every eigenvalue (the same numbers as Node's), and views the kind does not
// run are disabled with their reason. Screenshots at 1440 × 900 go to test-output/screenshots/.
//
// Skipped, with the reason printed, when /usr/bin/chromium is absent.

import type { Page } from 'playwright-core';
import { describe, expect, it } from 'vitest';
import demoBiped from '../../scenarios/demo-biped.json' with { type: 'json' };
import { bipedReturnMap } from '../../src/core/analysis/biped-map.js';
import type { BipedScenario } from '../../src/core/models/biped.js';
import { parseScenario } from '../../src/core/scenario.js';
import { CHROMIUM, haveChromium } from './harness.mjs';
import { pageTools, workbenchSession } from './page.js';

const available = haveChromium();
if (!available) console.warn(`e2e: skipped: ${CHROMIUM} is absent (install it with: apt-get update && apt-get install -y chromium)`);

describe.skipIf(!available)('model kinds in the workbench', () => {
  let page: Page;
  const pageErrors: string[] = [];
  workbenchSession((p) => {
    page = p;
  }, pageErrors, { waitForMap: true });
  const t = pageTools(() => page);


  const current = () => page.getByTestId('provenance').first().getAttribute('data-current');

  it('loads the two-legged walker demo and shows its section map with every eigenvalue', async () => {
    await page.getByTestId('demo-menu').click();
    await page.getByTestId('demo-biped-walk').click();
    await expect.poll(() => t.field('Model').inputValue()).toBe('biped');
    await t.view('map');
    await expect.poll(() => page.getByTestId('eigenvalues').count(), { timeout: 30_000 }).toBeGreaterThan(0);
    await expect.poll(current, { timeout: 30_000 }).toBe('true');
    // the same analysis in Node (src/core/analysis/biped-map.ts, the same kernel)
    const node = await bipedReturnMap(parseScenario(demoBiped) as BipedScenario, { samples: 61, iterations: 30 });
    expect(await page.getByTestId('fixed-point').count()).toBe(node.fixed_points.length);
    const first = Number(await page.getByTestId('fixed-point').first().locator('td').first().getAttribute('data-value'));
    expect(first).toBeCloseTo(node.fixed_points[0].height_m, 9);
    const eig = (await page.getByTestId('eigenvalues').first().textContent()) ?? '';
    for (const e of node.fixed_points[0].eigenvalues) expect(eig).toContain(`|λ| ${Number(e.modulus.toPrecision(4))}`);
    expect(await page.getByTestId('fixed-point').first().locator('[data-state]').getAttribute('data-state')).toBe(node.fixed_points[0].stable ? 'stable' : 'unstable');
    const option = await t.option('figure-biped-map');
    const series = option.series as { id: string; data: number[][] }[];
    expect(series.find((s) => s.id === 'eig-stable')!.data.length + series.find((s) => s.id === 'eig-unstable')!.data.length).toBe(
      node.fixed_points.reduce((n, f) => n + f.eigenvalues.length, 0),
    );
    await t.shot('biped-map');
  });

  it('disables the views a two-leg scenario does not run, with the reason', async () => {
    expect(await page.locator('#tab-compare').getAttribute('aria-disabled')).toBe('true');
    expect(await page.locator('#tab-compare').getAttribute('title')).toMatch(/not in the workbench for the two-leg model/);
    await page.locator('#tab-compare').click({ force: true }); // a mouse click on the disabled tab shows its reason
    await expect.poll(() => page.getByTestId('view-unsupported').textContent()).toMatch(/^The comparison: not in the workbench for the two-leg model yet/);
    expect(await page.locator('#tab-optimize').getAttribute('aria-disabled')).toBeNull();
    expect(await page.locator('#tab-map').getAttribute('aria-disabled')).toBeNull();
  });

  it('edits a leg, simulates, and draws two legs and the per-leg vertical forces', async () => {
    await t.setField('Right leg: stiffness factor', '0.85');
    await t.view('stride');
    await expect.poll(current, { timeout: 30_000 }).toBe('true');
    await expect.poll(() => page.getByTestId('biped-strides').locator('tbody tr').count(), { timeout: 30_000 }).toBeGreaterThan(0);
    // a bad value is flagged beside the field with the validator's bound, the views keep the last valid scenario
    await t.setField('Left leg: stiffness factor', '0');
    await expect.poll(() => t.describedBy('Left leg: stiffness factor')).toBe('expected a number from 1e-3 to 1000 (factor on the stiffness policy), found 0');
    await t.setField('Left leg: stiffness factor', '');
    await expect.poll(async () => (await page.getByTestId('scenario-check').textContent())?.includes('Scenario valid')).toBe(true);
    // an apex accuracy instead of the tolerances: a tolerance set beside it is flagged beside that field
    await page.locator('summary', { hasText: 'Integrator' }).click();
    await t.setField('Apex accuracy', '1e-8');
    await t.setField('Relative tolerance', '1e-9');
    await expect.poll(() => t.describedBy('Relative tolerance')).toMatch(/^expected no value beside integrator\.apex_accuracy_m \(which gives [\d.e-]+ here\), or that value, found 1e-9$/);
    await t.setField('Relative tolerance', '');
    await expect.poll(async () => (await page.getByTestId('scenario-check').textContent())?.includes('Scenario valid')).toBe(true);
    // the stride view, recomputed, states the accuracy and the tolerances it gave
    await expect.poll(async () => (await page.getByTestId('stride-accuracy').textContent())?.replace(/\s+/g, ' ').trim(), { timeout: 30_000 })
      .toMatch(/^Apex accuracy 1\.0e-8 m asked: rtol [\d.]+e-\d+, atol [\d.]+e-\d+ m\.$/);

    const scene = await t.option('figure-biped-scene');
    const ids = (scene.series as { id: string }[]).map((s) => s.id);
    expect(ids).toEqual(expect.arrayContaining(['leg-left', 'leg-right', 'foot-left', 'foot-right', 'body']));
    const forces = await t.option('figure-biped-forces');
    const fs = forces.series as { id: string; data: number[][]; markArea?: { data: unknown[] } }[];
    expect(fs.map((s) => s.id)).toEqual(expect.arrayContaining(['vertical-left', 'vertical-right', 'vertical-total']));
    // walking: a double-support interval in every stride of the window, shaded
    expect(fs.find((s) => s.id === 'double-support-0')!.markArea!.data.length).toBeGreaterThan(0);
    // the sum is the sum (the figure's own arithmetic, checked on the drawn data)
    const l = fs.find((s) => s.id === 'vertical-left')!.data;
    const r = fs.find((s) => s.id === 'vertical-right')!.data;
    const sum = fs.find((s) => s.id === 'vertical-total')!.data;
    sum.forEach((p, k) => expect(p[1]).toBeCloseTo(l[k][1] + r[k][1], 6));
    // the gait column: words with glyphs
    const gait = (await page.getByTestId('gait').first().textContent()) ?? '';
    expect(gait).toMatch(/▬\s?walking|⚠\s?changed/);
    // a study limit on the leg force draws its line
    await t.setField('Peak leg force', '300');
    await expect.poll(async () => ((await t.option('figure-biped-forces')).series as { id: string }[]).some((s) => s.id === 'force-limit')).toBe(true);
    await t.setField('Peak vertical force, both legs', '650');
    await expect.poll(async () => ((await t.option('figure-biped-forces')).series as { id: string }[]).some((s) => s.id === 'vertical-limit')).toBe(true);
    await page.locator('#stride-scrub').fill('60');
    await page.waitForTimeout(300);
    await t.shot('biped-stride');
    await page.getByTestId('figure-biped-forces').scrollIntoViewIfNeeded();
    await t.shot('biped-forces');
  });

  it('runs Monte Carlo and the basin on the walker (the core analyses of the two-leg model)', async () => {
    await t.view('montecarlo');
    const inPanel = async (label: string, value: string) => {
      const f = page.locator('[role=tabpanel]').getByLabel(label, { exact: true });
      await f.fill(value);
      await f.press('Tab');
    };
    await inPanel('Rollouts', '40');
    await inPanel('σ', '0.002');
    await page.getByTestId('start-montecarlo').click();
    await expect.poll(() => page.getByTestId('survival').textContent(), { timeout: 60_000 }).toMatch(/^\d+ \/ 40 /);
    // the apex accuracy set in the scenario (the previous test): the tolerances it gave, calibrated on the run
    expect(await page.getByTestId('montecarlo-accuracy').textContent()).toMatch(/^\s*1\.0e-8 m: rtol [\d.e-]+, measured [\d.e-]+ m\s*$/);
    await t.shot('biped-montecarlo');
    await t.view('basin');
    // the walker's own axes (core/analysis/basin.ts defaultBasinAxes): heights up to the stance leg's length
    expect(Number(await page.locator('[role=tabpanel]').getByLabel('Heights to', { exact: true }).inputValue())).toBeLessThanOrEqual(0.6);
    await inPanel('Height points', '21');
    await inPanel('Speed points', '21');
    await page.getByTestId('start-basin').click();
    await expect.poll(async () => (await t.option('figure-basin').catch(() => null)) !== null, { timeout: 120_000 }).toBe(true);
    await expect.poll(current, { timeout: 120_000 }).toBe('true');
    await t.shot('biped-basin');
  }, 240_000);

  it('switches the model kind after asking, and back with undo', async () => {
    await page.getByLabel('Model', { exact: true }).selectOption('lateral');
    await expect.poll(() => page.getByTestId('ask').isVisible()).toBe(true);
    expect(await page.getByTestId('ask').textContent()).toContain('Switch to the lateral model?');
    await page.getByTestId('ask-keep').click();
    await expect.poll(() => t.field('Model').inputValue()).toBe('biped');
    await page.getByTestId('demo-menu').click();
    await page.getByTestId('demo-biped-run').click();
    const ask = page.getByTestId('ask');
    if (await ask.isVisible()) await page.getByTestId('ask-replace').click();
    await expect.poll(() => t.field('Gait').inputValue()).toBe('running');
    await t.view('stride');
    await expect.poll(() => page.getByTestId('gait').first().textContent(), { timeout: 30_000 }).toMatch(/⌒\s?running/);
    await t.shot('biped-run-stride');
    await page.getByTestId('figure-biped-forces').scrollIntoViewIfNeeded();
    await t.shot('biped-run-forces');
    expect(pageErrors.join('\n')).toBe('');
  });

  it('loads the six-legged runner: the top view, its gaits with all eigenvalues, a kick and Monte Carlo over kicks', async () => {
    await page.getByTestId('demo-menu').click();
    await page.getByTestId('demo-hexapod').click();
    if (await page.getByTestId('ask').isVisible()) await page.getByTestId('ask-replace').click();
    await expect.poll(() => t.field('Model').inputValue()).toBe('lateral');
    expect(await t.field('Moment of inertia').inputValue()).toBe('0.00675'); // scenarios/demo-hexapod.json
    await t.view('stride');
    await expect.poll(current, { timeout: 30_000 }).toBe('true');
    const top = await t.option('figure-lateral-top');
    const ids = (top.series as { id: string }[]).map((x) => x.id);
    expect(ids).toEqual(expect.arrayContaining(['path', 'body-axis', 'leg', 'foot', 'force', 'com']));
    await page.locator('#lateral-scrub').fill('40');
    await page.waitForTimeout(300);
    // in stance at that sample: the leg and the force arrow are drawn
    const frame = (await t.option('figure-lateral-top')).series as { id: string; data: number[][] }[];
    expect(frame.find((x) => x.id === 'leg')!.data).toHaveLength(2);
    expect(frame.find((x) => x.id === 'force')!.data).toHaveLength(2);
    await t.shot('lateral-top');

    await t.view('map');
    await expect.poll(() => page.getByTestId('fixed-point').count(), { timeout: 60_000 }).toBeGreaterThan(0);
    // the full stride map has the eigenvalue 1 twice (energy, rotation): Schmitt & Holmes 2000's symmetry
    const full = await page.getByTestId('full-eigenvalues').first().locator('span').allTextContents();
    expect(full).toHaveLength(4); // (speed, heading to body, angular velocity, heading)
    expect(full.filter((x) => Math.abs(Number(x) - 1) < 1e-5)).toHaveLength(2);
    expect((await page.getByTestId('reduced-eigenvalues').first().textContent())?.length).toBeGreaterThan(0);
    await t.shot('lateral-map');

    // views the lateral model does not run say why
    expect(await page.locator('#tab-montecarlo').getAttribute('title')).toMatch(/not in the workbench for the lateral model/);

    // its stability regions (pronk scan on a lateral scenario): the default axes are the attachment
    // offset by the touchdown angle; 3 x 2 of them (55 and 75 deg), behind, at and ahead of the centre of mass
    await t.view('scan');
    const inScan = async (label: string, value: string, nth: number) => {
      const f = page.locator('[role=tabpanel]').getByLabel(label, { exact: true }).nth(nth);
      await f.fill(value);
      await f.press('Tab');
    };
    await inScan('Points', '3', 0);
    await inScan('From', '55', 1);
    await inScan('To', '75', 1);
    await inScan('Points', '2', 1);
    await page.getByTestId('start-scan').click();
    await expect.poll(() => page.getByTestId('lateral-scan-counts').isVisible(), { timeout: 120_000 }).toBe(true);
    const regions = (await t.option('figure-lateral-scan')).series as { id: string; data: number[][] }[];
    const classOf = (d: number) => regions.filter((x) => x.data.some((p) => Math.abs(p[0] - d) < 1e-12)).map((x) => x.id);
    // Schmitt & Holmes 2000: behind the centre of mass stable, at it neutral, ahead unstable only
    const reach = Number((0.25 * 0.08).toPrecision(2)); // a quarter of the demo's leg length (scenarios/demo-hexapod.json)
    expect(classOf(-reach)).toEqual(['stable']);
    expect(classOf(0)).toEqual(['neutral']);
    expect(classOf(reach)).toEqual(['unstable']);
    await t.shot('lateral-scan');

    // its basin: heading and angular-velocity errors from the gait (pronk basin on a lateral scenario)
    await t.view('basin');
    const inBasin = async (label: string, value: string) => {
      const f = page.locator('[role=tabpanel]').getByLabel(label, { exact: true });
      await f.fill(value);
      await f.press('Tab');
    };
    await inBasin('Heading points', '200000');
    await inBasin('Angular-velocity points', '200');
    await page.getByTestId('start-basin').click();
    // a grid past a million cells is flagged beside the heading fields, nothing runs
    await expect.poll(() => page.getByTestId('lateral-basin-headings-issue').textContent()).toMatch(/expected at most 1000000 cells, found 40000000/);
    await inBasin('Heading points', '5');
    await inBasin('Angular-velocity points', '5');
    await inBasin('Strides per cell', '12');
    await page.getByTestId('start-basin').click();
    await expect.poll(() => page.getByTestId('lateral-attracted').textContent(), { timeout: 60_000 }).toMatch(/^\d+(\.\d+)? ?%$/);
    const basin = (await t.option('figure-lateral-basin')).series as { id: string; data: unknown[] }[];
    expect(basin.map((x) => x.id)).toEqual(expect.arrayContaining(['converged', 'wandering', 'fell', 'no_speed', 'current']));
    // the 25 cells, each in one outcome's series
    expect(basin.filter((x) => x.id !== 'current').reduce((n, x) => n + x.data.length, 0)).toBe(25);
    await t.shot('lateral-basin');

    await t.view('recover');
    await page.getByTestId('start-recover').click();
    await expect.poll(() => page.getByTestId('recover-outcome').isVisible(), { timeout: 60_000 }).toBe(true);
    expect(await page.getByTestId('heading-lost').textContent()).toMatch(/°|–/);
    const rec = (await t.option('figure-recover-top')).series as { id: string }[];
    expect(rec.map((x) => x.id)).toEqual(expect.arrayContaining(['unkicked', 'path', 'kick']));
    const inPanel = async (label: string, value: string) => {
      const f = page.locator('[role=tabpanel]').getByLabel(label, { exact: true });
      await f.fill(value);
      await f.press('Tab');
    };
    await inPanel('Kicks', '60');
    await page.getByTestId('start-recoverMC').click();
    await expect.poll(() => page.getByTestId('mc-survival').textContent(), { timeout: 120_000 }).toMatch(/^\d+ \/ 60 .*Wilson 95 %/);
    await t.shot('lateral-recover');
    expect(pageErrors.join('\n')).toBe('');
  }, 240_000);
});
