// The workbench end to end, in Debian's headless Chromium against `vite preview` (a production
// build): the demo loads and computes in the workers, an edit updates the return map to the very
// numbers the core computes in Node, an invalid value is flagged beside its field while the views
// keep the last valid scenario, edits survive a reload, an optimization runs and another is
// cancelled, the C export carries the same tables as `pronk export`, a dead worker is replaced.
// Screenshots of the main views go to test-output/screenshots/ for review.
//
// Skipped, with the reason printed, when /usr/bin/chromium is absent (CI installs it).

import { mkdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import type { Download, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { apexReturnMap } from '../../src/core/analysis/return-map.js';
import { buildExport } from '../../src/core/export/build.js';
import { scenarioSource } from '../../src/core/export/input.js';
import { hex32 } from '../../src/core/export/lookup.js';
import { demoScenario, parseScenario, type Scenario } from '../../src/core/scenario.js';
import { ensureBuilt, haveChromium, launchBrowser, ROOT, startPreview, CHROMIUM } from './harness.mjs';

const SHOTS = join(ROOT, 'test-output/screenshots');
const available = haveChromium();
if (!available) console.warn(`e2e: skipped: ${CHROMIUM} is absent (install it with: apt-get update && apt-get install -y chromium)`);

/** The demo scenario with the retraction policy's apex attack angle changed. */
function demoWithAttack(attack: number): Scenario {
  const s = structuredClone(demoScenario()) as unknown as { policy: { angle: { attack_at_apex_deg: number } } };
  s.policy.angle.attack_at_apex_deg = attack;
  return parseScenario(s);
}

describe.skipIf(!available)('the workbench in headless Chromium', () => {
  let preview: Awaited<ReturnType<typeof startPreview>>;
  let browser: Awaited<ReturnType<typeof launchBrowser>>;
  let page: Page;
  const pageErrors: string[] = [];

  const shot = (name: string) => page.screenshot({ path: join(SHOTS, `${name}.png`) });
  const field = (label: string) => page.getByLabel(label, { exact: true });
  const firstFixedPoint = async () => Number(await page.getByTestId('fixed-point').first().locator('td').first().textContent());
  const revision = async (testId: string) => Number(await page.getByTestId(testId).getAttribute('data-revision'));
  async function setField(label: string, value: string) {
    await field(label).fill(value);
    await field(label).press('Tab');
  }
  async function describedBy(label: string): Promise<string> {
    return field(label).evaluate((el) =>
      (el.getAttribute('aria-describedby') ?? '').split(/\s+/).map((id) => document.getElementById(id)?.textContent ?? '').join(' ').trim(),
    );
  }
  /** The fixed point the map shows once it is current for the edited scenario. */
  async function currentFixedPoint(unlike: number): Promise<number> {
    await expect.poll(async () => (await firstFixedPoint()) !== unlike && (await page.getByTestId('provenance').first().getAttribute('data-current')) === 'true', { timeout: 20_000 }).toBe(true);
    return firstFixedPoint();
  }

  beforeAll(async () => {
    mkdirSync(SHOTS, { recursive: true });
    ensureBuilt((m) => console.log(`e2e: ${m}`));
    preview = await startPreview();
    browser = await launchBrowser();
    page = await browser.context.newPage();
    page.on('pageerror', (e) => pageErrors.push(e.message));
    await page.goto(preview.url);
  }, 120_000);

  afterAll(async () => {
    await browser?.close();
    await preview?.stop();
  });

  it('loads the demo scenario and computes its return map in the workers', async () => {
    await expect.poll(() => page.getByTestId('fixed-point').count(), { timeout: 20_000 }).toBeGreaterThan(0);
    expect(await page.locator('header').textContent()).toContain('Tamarack-9 monopod');
    expect(await page.getByTestId('scenario-check').textContent()).toContain('Scenario valid');
    // COOP/COEP from vite preview: the optimizer's cancel flag needs SharedArrayBuffer
    expect(await page.evaluate(() => crossOriginIsolated)).toBe(true);
    // the same analysis in Node (src/core/analysis/return-map.ts, same kernel), shown to 6 digits
    const node = await apexReturnMap(demoScenario());
    expect(await firstFixedPoint()).toBeCloseTo(node.fixed_points[0].apex_height_m, 5);
    expect(await page.getByTestId('fixed-point').count()).toBe(node.fixed_points.length);
    expect(await revision('figure-map')).toBeGreaterThan(0);
    expect(await page.locator('footer').textContent()).toContain('Simulation results are not a guarantee');
    await shot('return-map');
  });

  it('updates the map after an edit, to the numbers the core computes', async () => {
    const before = await firstFixedPoint();
    const drawn = await revision('figure-map');
    await setField('Attack angle at apex', '62');
    const after = await currentFixedPoint(before);
    const node = await apexReturnMap(demoWithAttack(62));
    const stable = node.fixed_points.find((f) => f.stable)!;
    expect(after).toBeCloseTo(node.fixed_points[0].apex_height_m, 5);
    expect(stable).toBeDefined();
    expect(await revision('figure-map')).toBeGreaterThan(drawn);
  });

  it('flags an invalid value beside its field and keeps computing on the last valid scenario', async () => {
    const shown = await firstFixedPoint();
    await setField('Mass', '-9');
    // the message of the scenario validator (src/core/scenario.ts, body.mass_kg)
    await expect.poll(() => describedBy('Mass')).toBe('expected a number from 1e-6 to 1e6 (kg), found -9');
    expect(await field('Mass').getAttribute('aria-invalid')).toBe('true');
    const summary = await page.getByTestId('scenario-check').textContent();
    expect(summary).toContain('1 problem in the scenario');
    expect(summary).toContain('Computations use the last valid scenario');
    await expect.poll(() => page.getByTestId('using-last-valid').isVisible()).toBe(true);
    expect(await firstFixedPoint()).toBe(shown);
    await shot('invalid-value');
    await setField('Mass', '9');
    await expect.poll(async () => (await page.getByTestId('scenario-check').textContent())?.includes('Scenario valid')).toBe(true);
  });

  it('keeps the edits across a reload', async () => {
    await page.waitForTimeout(300);
    await page.reload();
    await expect.poll(() => field('Attack angle at apex').inputValue()).toBe('62');
    expect(await field('Mass').inputValue()).toBe('9');
    await expect.poll(() => page.getByTestId('fixed-point').count(), { timeout: 20_000 }).toBeGreaterThan(0);
    expect(await firstFixedPoint()).toBeCloseTo((await apexReturnMap(demoWithAttack(62))).fixed_points[0].apex_height_m, 5);
  });

  it('moves between the views from the keyboard', async () => {
    await page.locator('#tab-map').focus();
    await page.keyboard.press('ArrowRight');
    expect(await page.locator('#tab-stride').getAttribute('aria-selected')).toBe('true');
    expect(await page.evaluate(() => document.activeElement?.id)).toBe('tab-stride');
    await page.keyboard.press('ArrowLeft');
    expect(await page.locator('#tab-map').getAttribute('aria-selected')).toBe('true');
  });

  it('runs a short optimization in the workers', async () => {
    await setField('Evaluations per restart', '6');
    await setField('Restarts', '1');
    await page.locator('#tab-optimize').click();
    await page.getByTestId('start-optimize').click();
    await expect.poll(() => page.getByTestId('optimize-outcome').textContent(), { timeout: 90_000 }).toMatch(/^\s*Finished\.\s+6 evaluations/);
    // the demo study's three free parameters (scenarios/demo-study.json)
    expect(await page.getByTestId('optimized-parameters').locator('tbody tr').count()).toBe(3);
    expect(await revision('figure-convergence')).toBeGreaterThan(0);
    await shot('optimizer');
  }, 120_000);

  it('cancels a long optimization and keeps its best point', async () => {
    await setField('Evaluations per restart', '500');
    await setField('Restarts', '2');
    await page.getByTestId('start-optimize').click();
    await expect.poll(async () => Number(/^(\d+) \//.exec((await page.getByTestId('optimize-live').textContent().catch(() => '')) ?? '')?.[1] ?? 0), { timeout: 60_000 }).toBeGreaterThan(1);
    const clicked = Date.now();
    await page.getByTestId('cancel-optimize').click();
    await expect.poll(() => page.getByTestId('optimize-outcome').textContent(), { timeout: 60_000 }).toMatch(/^\s*Cancelled/);
    console.log(`e2e: cancel to result (held-out re-scoring included): ${Date.now() - clicked} ms`);
    const outcome = (await page.getByTestId('optimize-outcome').textContent()) ?? '';
    expect(Number(/(\d+) evaluations/.exec(outcome)![1])).toBeLessThan(1000);
    await setField('Evaluations per restart', '6');
    await setField('Restarts', '1');
  }, 120_000);

  it('compares the optimized policy with the baseline on the same terrains', async () => {
    await page.locator('#tab-compare').click();
    await page.getByTestId('start-compare').click();
    await expect.poll(() => page.getByTestId('paired-difference').count(), { timeout: 60_000 }).toBe(1);
    expect(await page.getByTestId('paired-difference').textContent()).toMatch(/^-?\d+\.\d %$/);
    await shot('compare');
  }, 90_000);

  it('exports a C header with the tables `pronk export` writes for the same scenario', async () => {
    await page.getByTestId('open-export').click();
    const dialog = page.getByTestId('export-dialog');
    await expect.poll(() => dialog.isVisible()).toBe(true);
    await dialog.getByLabel("The scenario's policy (last valid scenario)").check();
    await dialog.getByLabel(/C99 header and source/).check();
    const downloads: Download[] = [];
    page.on('download', (d) => downloads.push(d));
    await dialog.getByTestId('export-run').click();
    await expect.poll(() => downloads.length, { timeout: 20_000 }).toBe(2);
    const files = new Map<string, string>();
    for (const d of downloads) files.set(d.suggestedFilename(), readFileSync((await d.path())!, 'utf8'));
    const headerName = [...files.keys()].find((n) => n.endsWith('.h'))!;
    const header = files.get(headerName)!;
    expect([...files.keys()].sort()).toEqual([headerName, headerName.replace(/\.h$/, '.c')].sort());
    // the same exporter in Node (src/core/export/), on the scenario the page had (62° at apex)
    const node = buildExport(await scenarioSource(demoWithAttack(62), 'demo.json'));
    expect(header).toContain(`${hex32(node.crc32)}u`);
    expect(header).toMatch(/#ifndef [A-Z0-9_]+_POLICY_H/);
    expect(header).toContain('"attack_at_apex_deg":62');
    expect(header.replace(/\s+\*\s+/g, ' ')).toContain('Simulation results are not a guarantee');
    expect(await dialog.textContent()).toContain('Before this table runs a machine');
    await page.keyboard.press('Escape');
    await expect.poll(() => dialog.isVisible()).toBe(false);
  });

  it('runs the other views and saves their screenshots', async () => {
    await page.locator('#tab-scan').click();
    await page.locator('#set-scan-x-n').fill('11'); // the horizontal axis: 11 × 16 cells
    await page.locator('#set-scan-x-n').press('Tab');
    await page.getByTestId('start-scan').click();
    await expect.poll(() => page.getByTestId('figure-scan').count(), { timeout: 60_000 }).toBe(1);
    await expect.poll(() => revision('figure-scan')).toBeGreaterThan(0);
    await shot('stability-regions');

    await page.locator('#tab-basin').click();
    // a cancel stops the workers mid-batch (they are replaced), and the next run is whole
    for (const id of ['#set-basin-heights-n', '#set-basin-speeds-n']) {
      await page.locator(id).fill('121');
      await page.locator(id).press('Tab');
    }
    await page.getByTestId('start-basin').click();
    await page.getByTestId('cancel-basin').click();
    await expect.poll(() => page.getByTestId('notices').textContent(), { timeout: 10_000 }).toContain('Basin of attraction: cancelled.');
    expect(await page.getByTestId('attracted').count()).toBe(0);
    for (const id of ['#set-basin-heights-n', '#set-basin-speeds-n']) {
      await page.locator(id).fill('41');
      await page.locator(id).press('Tab');
    }
    await page.getByTestId('start-basin').click();
    await expect.poll(() => page.getByTestId('attracted').count(), { timeout: 60_000 }).toBe(1);
    expect(await page.getByTestId('figure-basin').getAttribute('aria-label')).toContain('Basin of attraction');
    await shot('basin');

    await page.locator('#tab-montecarlo').click();
    await page.getByTestId('start-montecarlo').click();
    await expect.poll(() => page.getByTestId('survival').count(), { timeout: 60_000 }).toBe(1);
    expect(await page.getByTestId('survival').textContent()).toMatch(/^\d+ \/ 1000 \(\d+\.\d %\)$/);
    await shot('monte-carlo');

    await page.locator('#tab-stride').click();
    await page.getByTestId('play').click();
    await page.waitForTimeout(1200);
    await page.getByTestId('pause').click();
    const scrub = page.getByLabel('Time', { exact: true });
    expect(Number(await scrub.inputValue())).toBeGreaterThan(0);
    await scrub.focus();
    const at = Number(await scrub.inputValue());
    await page.keyboard.press('ArrowRight');
    expect(Number(await scrub.inputValue())).toBe(at + 1);
    expect(await revision('figure-scene')).toBeGreaterThan(1);
    await shot('stride');
  }, 120_000);

  it('replaces a worker that dies and keeps the work', async () => {
    await page.goto(`${preview.url}?diagnostics`);
    await page.locator('#tab-map').click();
    await expect.poll(() => page.getByTestId('fixed-point').count(), { timeout: 20_000 }).toBeGreaterThan(0);
    const before = await firstFixedPoint();
    await page.evaluate(() => (window as unknown as { pronk: { crashWorker(): void } }).pronk.crashWorker());
    await expect.poll(() => page.getByTestId('notices').textContent(), { timeout: 10_000 }).toContain('A compute worker stopped');
    expect(await field('Attack angle at apex').inputValue()).toBe('62');
    await setField('Attack angle at apex', '63');
    const after = await currentFixedPoint(before);
    expect(after).toBeCloseTo((await apexReturnMap(demoWithAttack(63))).fixed_points[0].apex_height_m, 5);
    await shot('after-worker-restart');
  });

  it('had no uncaught page errors', () => {
    expect(pageErrors).toEqual([]);
  });
});
