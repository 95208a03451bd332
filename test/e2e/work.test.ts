// The user's work in a real browser (Debian's headless Chromium against `vite preview`): a file
// that is not a scenario, a study, a result or a project is refused with the reasons and nothing
// changes (not even after a reload, so the autosave kept the work); opening over unsaved edits
// asks first; undo and redo go across edits, Open… and Demo and survive a reload; an error that
// involves two fields marks both, by the labels on screen, also while the field has the focus; a
// policy kind switch that would orphan the study's free parameters asks what to do.
//
// Skipped, with the reason printed, when /usr/bin/chromium is absent (CI installs it).

import type { Page } from 'playwright-core';
import { describe, expect, it } from 'vitest';
import { demoScenario } from '../../src/core/scenario.js';
import { CHROMIUM, haveChromium } from './harness.mjs';
import { pageTools, workbenchSession } from './page.js';

const available = haveChromium();
if (!available) console.warn(`e2e: skipped: ${CHROMIUM} is absent (install it with: apt-get update && apt-get install -y chromium)`);

describe.skipIf(!available)("the user's work in headless Chromium", () => {
  let page: Page;
  const pageErrors: string[] = [];
  workbenchSession((p) => {
    page = p;
  }, pageErrors, { waitForMap: true });
  const t = pageTools(() => page);
  const mass = () => t.field('Mass').inputValue();


  it('refuses a file that is not a scenario, with the reasons, and keeps the editors and the autosave as they were', async () => {
    await t.setField('Mass', '12');
    await t.open('heavy.json', '{"body":{"mass_kg":"heavy"}}');
    await expect.poll(() => t.notices()).toContain('heavy.json: not opened');
    const text = await t.notices();
    expect(text).toContain('the editors are unchanged');
    // the scenario validator's reason (src/core/scenario.ts)
    expect(text).toContain('body.mass_kg: expected a number from 1e-6 to 1e6 (kg), found "heavy"');
    expect(await page.getByTestId('ask').isVisible()).toBe(false);
    expect(await mass()).toBe('12');
    expect(await t.field('Attack angle at apex').inputValue()).toBe('64');
    await t.shot('open-refused');
    await page.waitForTimeout(300);
    await page.reload();
    await expect.poll(() => mass()).toBe('12');
    await t.dismissNotices();
  });

  it('asks before an opened file replaces unsaved edits, and undoes and redoes across edits, Open…, Demo and a reload', async () => {
    const other = structuredClone(demoScenario()) as unknown as { name: string; body: { mass_kg: number } };
    other.name = 'Bench rig B';
    other.body.mass_kg = 11;
    await t.open('rig-b.json', JSON.stringify(other));
    // the Mass edit (12) is not saved in a file: asked first
    const ask = page.getByTestId('ask');
    await expect.poll(() => ask.isVisible()).toBe(true);
    expect(await ask.textContent()).toContain('Replace the unsaved edits?');
    await t.shot('ask-before-replacing');
    await page.getByTestId('ask-cancel').click();
    await expect.poll(() => ask.isVisible()).toBe(false);
    expect(await mass()).toBe('12');

    await t.open('rig-b.json', JSON.stringify(other));
    await expect.poll(() => ask.isVisible()).toBe(true);
    await page.getByTestId('ask-replace').click();
    await expect.poll(() => mass()).toBe('11');
    expect(await page.locator('header').textContent()).toContain('Bench rig B');

    // Ctrl+Z: back to the edits before the file; kept across a reload
    await page.locator('body').press('Control+z');
    await expect.poll(() => mass()).toBe('12');
    await page.waitForTimeout(300);
    await page.reload();
    await expect.poll(() => mass()).toBe('12');
    expect(await page.getByTestId('undo').isEnabled()).toBe(true);
    await page.getByTestId('undo').click();
    await expect.poll(() => mass()).toBe('9');
    await page.locator('body').press('Control+Shift+z');
    await expect.poll(() => mass()).toBe('12');
    await page.getByTestId('redo').click();
    await expect.poll(() => mass()).toBe('11');

    // Demo replaces unsaved edits only after asking; undo brings them back
    await t.setField('Mass', '10');
    await page.getByTestId('demo').click();
    await expect.poll(() => ask.isVisible()).toBe(true);
    await page.getByTestId('ask-replace').click();
    await expect.poll(() => mass()).toBe('9');
    expect(await page.locator('header').textContent()).toContain('Tamarack-9 monopod');
    await page.getByTestId('undo').click();
    await expect.poll(() => mass()).toBe('10');
    // Ctrl+Z inside a field undoes the drafts too, and the field shows it
    await t.field('Mass').focus();
    await page.keyboard.press('Control+z');
    await expect.poll(() => mass()).toBe('11');
    await t.dismissNotices();
  });

  it('marks both fields of an error that involves two, names them by their labels, and shows it while the field has the focus', async () => {
    await t.setField('Clamp: lowest angle', '85'); // the clamp's steepest is 80° (scenarios/demo.json)
    await expect.poll(() => t.describedBy('Clamp: lowest angle')).toBe('must be below Clamp: steepest angle (80°); found 85°');
    expect(await t.describedBy('Clamp: steepest angle')).toBe('must be above Clamp: lowest angle (85°); found 80°');
    for (const label of ['Clamp: lowest angle', 'Clamp: steepest angle']) expect(await t.field(label).getAttribute('aria-invalid')).toBe('true');
    const summary = (await page.getByTestId('scenario-check').textContent()) ?? '';
    expect(summary).toContain('1 problem in the scenario');
    expect(summary).toContain('Clamp: lowest angle and Clamp: steepest angle: 85 is not below 80');
    expect(summary).not.toMatch(/policy\.angle|min_deg|max_deg/);
    // the link in the summary takes the user to the field, whose problem shows while it has the focus
    await page.getByTestId('scenario-check').getByRole('button').first().click();
    expect(await page.evaluate(() => document.activeElement?.id)).toBe('sc-policy-angle-min_deg');
    await page.waitForTimeout(700);
    expect(await t.describedBy('Clamp: lowest angle')).toBe('must be below Clamp: steepest angle (80°); found 85°');
    await t.shot('two-field-error');
    await t.setField('Clamp: lowest angle', '');

    // a free parameter's bounds, and the limits' touchdown angle range
    await t.field('Upper bound').first().fill('50'); // below its lower bound, 55 (scenarios/demo-study.json)
    await t.field('Upper bound').first().press('Tab');
    await expect.poll(() => t.describedBy('Lower bound')).toBe('must be below Free parameter 1 (Attack angle at apex): upper bound (50); found 55');
    expect(await t.describedBy('Upper bound')).toBe('must be above Free parameter 1 (Attack angle at apex): lower bound (55); found 50');
    await t.field('Upper bound').first().fill('75');
    await t.field('Upper bound').first().press('Tab');
    await t.setField('Touchdown angle, lowest', '88');
    await expect.poll(() => t.describedBy('Touchdown angle, steepest')).toBe('must be above Touchdown angle, lowest (88°); found 85°');
    expect(await t.field('Touchdown angle, lowest').getAttribute('aria-invalid')).toBe('true');
    const study = (await page.getByTestId('scenario-check').textContent()) ?? '';
    expect(study).toContain('Touchdown angle, lowest and Touchdown angle, steepest');
    await t.setField('Touchdown angle, lowest', '55');
    await expect.poll(async () => (await page.getByTestId('scenario-check').textContent())?.includes('problem')).toBe(false);
  });

  it('asks what to do when a policy kind switch would leave the study naming parameters of the old kind', async () => {
    const kind = t.field('Touchdown angle');
    await kind.selectOption('fixed');
    const ask = page.getByTestId('ask');
    await expect.poll(() => ask.isVisible()).toBe(true);
    expect(await ask.textContent()).toMatch(/belong to the retraction policy/);
    await t.shot('ask-policy-kind');
    await page.getByTestId('ask-keep').click();
    await expect.poll(() => kind.inputValue()).toBe('retraction');
    expect(await t.field('Attack angle at apex').inputValue()).toBe('64');
    expect(await page.getByLabel('Parameter 1', { exact: true }).count()).toBe(1);

    await kind.selectOption('fixed');
    await expect.poll(() => ask.isVisible()).toBe(true);
    await page.getByTestId('ask-drop').click();
    await expect.poll(() => kind.inputValue()).toBe('fixed');
    expect(await page.getByLabel('Parameter 1', { exact: true }).count()).toBe(0);
    // the study says it has no free parameter left, instead of being silently broken
    await expect.poll(() => page.getByTestId('scenario-check').textContent()).toContain('problem in the study');
    await page.getByTestId('undo').click();
    await expect.poll(() => kind.inputValue()).toBe('retraction');
    expect(await page.getByLabel('Parameter 3', { exact: true }).count()).toBe(1);
  });

  it('had no uncaught page errors', () => {
    expect(pageErrors).toEqual([]);
  });
});
