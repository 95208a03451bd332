// The workbench end to end, in Debian's headless Chromium against `vite preview` (a production
// build): the demo loads and computes in the workers, an edit updates the return map to the very
// numbers the core computes in Node, an invalid value is flagged beside its field while the views
// keep the last valid scenario, edits survive a reload, an optimization runs and another is
// cancelled (the button says so at once), the C export carries the same tables as `pronk export`,
// a dead worker is replaced; the figures are readable (legends whole, the survival axis zoomed to
// the data, the peak-force limit drawn, the optimizer's tables apart at every width from 1280 px),
// a click on a basin or scan cell loads its point, and figures and tables download as SVG, PNG and
// CSV. Screenshots of every view at 1440 × 900 go to test-output/screenshots/ for review.
//
// Skipped, with the reason printed, when /usr/bin/chromium is absent (CI installs it).

import { readFileSync } from 'node:fs';
import type { Download, Page } from 'playwright-core';
import { describe, expect, it } from 'vitest';
import { apexReturnMap } from '../../src/core/analysis/return-map.js';
import { buildExport } from '../../src/core/export/build.js';
import { scenarioSource } from '../../src/core/export/input.js';
import { hex32 } from '../../src/core/export/lookup.js';
import { demoScenario, parseScenario, type Scenario } from '../../src/core/scenario.js';
import { CHROMIUM, haveChromium } from './harness.mjs';
import { expectLegendsWhole, overlaps, pageTools, SCREEN, workbenchSession } from './page.js';

const available = haveChromium();
if (!available) console.warn(`e2e: skipped: ${CHROMIUM} is absent (install it with: apt-get update && apt-get install -y chromium)`);

/** The demo scenario with the retraction policy's apex attack angle changed. */
function demoWithAttack(attack: number): Scenario {
  const s = structuredClone(demoScenario()) as unknown as { policy: { angle: { attack_at_apex_deg: number } } };
  s.policy.angle.attack_at_apex_deg = attack;
  return parseScenario(s);
}

describe.skipIf(!available)('the workbench in headless Chromium', () => {
  let page: Page;
  const pageErrors: string[] = [];
  const session = workbenchSession((p) => {
    page = p;
  }, pageErrors);

  const t = pageTools(() => page);
  const { shot, field, setField, describedBy, revision } = t;
  const firstFixedPoint = async () => Number(await page.getByTestId('fixed-point').first().locator('td').first().textContent());
  /** The fixed point the map shows once it is current for the edited scenario. */
  async function currentFixedPoint(unlike: number): Promise<number> {
    await expect.poll(async () => (await firstFixedPoint()) !== unlike && (await page.getByTestId('provenance').first().getAttribute('data-current')) === 'true', { timeout: 20_000 }).toBe(true);
    return firstFixedPoint();
  }


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
    // the chart library loads lazily, so the figure may draw a moment after the table shows
    await expect.poll(() => revision('figure-map'), { timeout: 20_000 }).toBeGreaterThan(0);
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
    await expect.poll(() => revision('figure-map'), { timeout: 20_000 }).toBeGreaterThan(drawn);
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
    await t.view('optimize');
    await page.getByTestId('start-optimize').click();
    await expect.poll(() => page.getByTestId('optimize-outcome').textContent(), { timeout: 90_000 }).toMatch(/^\s*Finished\.\s+6 evaluations/);
    // the demo study's three free parameters (scenarios/demo-study.json), by the labels a person reads
    const rows = page.getByTestId('optimized-parameters').locator('tbody tr');
    expect(await rows.count()).toBe(3);
    expect(await rows.first().locator('td').first().textContent()).toBe('Attack angle at apex (°)');
    expect(await rows.first().locator('td').first().getAttribute('title')).toBe('policy.angle.attack_at_apex_deg');
    await expect.poll(() => revision('figure-convergence'), { timeout: 20_000 }).toBeGreaterThan(0);
    expectLegendsWhole(await t.option('figure-convergence'));
    // the margins as a share of each limit, the binding one marked
    const margins = page.getByTestId('limit-margins');
    expect(await margins.locator('thead').textContent()).toContain('% of limit');
    expect(await margins.locator('tr[data-binding="true"]').count()).toBe(1);
    expect(await margins.locator('tr[data-binding="true"]').textContent()).toContain('binding');
    await shot('optimizer');
  }, 120_000);

  it('keeps the optimizer\'s parameter, limit and restart tables apart at 1280, 1440 and 1920 px', async () => {
    for (const width of [1280, 1440, 1920]) {
      await page.setViewportSize({ width, height: 900 });
      await page.waitForTimeout(200);
      const boxes = [];
      for (const id of ['table-parameters', 'table-limits', 'table-restarts']) {
        const box = (await page.getByTestId(id).boundingBox())!;
        boxes.push({ id, box });
        // every cell of the table inside its own box
        const cells = await page.getByTestId(id).locator('th, td').evaluateAll((els) => els.map((el) => el.getBoundingClientRect().toJSON() as { x: number; y: number; width: number; height: number; right: number }));
        const scroller = (await page.getByTestId(id).locator('.scroll').boundingBox())!;
        for (const c of cells) {
          expect(c.x, `${id} at ${width} px`).toBeGreaterThanOrEqual(scroller.x - 0.5);
          expect(c.x + c.width, `${id} at ${width} px`).toBeLessThanOrEqual(scroller.x + scroller.width + 0.5 + (await page.getByTestId(id).locator('.scroll').evaluate((el) => el.scrollWidth - el.clientWidth)));
        }
      }
      for (let i = 0; i < boxes.length; i++) {
        for (let j = i + 1; j < boxes.length; j++) expect(overlaps(boxes[i].box, boxes[j].box), `${boxes[i].id} and ${boxes[j].id} at ${width} px`).toBe(false);
      }
      // and no table spills out of the view's panel
      const panel = (await page.locator('.panel').boundingBox())!;
      for (const { box } of boxes) expect(box.x + box.width).toBeLessThanOrEqual(panel.x + panel.width + 0.5);
    }
    await page.setViewportSize(SCREEN);
    await page.getByTestId('optimizer-tables').scrollIntoViewIfNeeded();
    await shot('optimizer-tables');
    await page.locator('.panel').evaluate((el) => el.scrollTo(0, 0));
  });

  it('acknowledges a Cancel at once, re-scores the best point as its own phase, and counts the evaluations once', async () => {
    await setField('Evaluations per restart', '500');
    await setField('Restarts', '2');
    await page.getByTestId('start-optimize').click();
    await expect.poll(async () => Number((await page.getByTestId('optimize-evaluations').textContent().catch(() => '0')) ?? 0), { timeout: 60_000 }).toBeGreaterThan(1);
    expect(await page.getByTestId('phase-optimize').textContent()).toBe('Searching');
    // at once: the button changes within the click's own task (its microtasks), before any task
    // queued behind the click runs (no wall-clock bound: the bench measures latencies)
    const acknowledged = await page.getByTestId('cancel-optimize').evaluate(
      (button) =>
        new Promise<boolean>((resolve) => {
          const observer = new MutationObserver(() => {
            if (button.getAttribute('data-cancelling') === 'true') {
              observer.disconnect();
              resolve(true);
            }
          });
          observer.observe(button, { attributes: true, childList: true, characterData: true, subtree: true });
          (button as HTMLButtonElement).click();
          setTimeout(() => {
            observer.disconnect();
            resolve(false);
          }, 0);
        }),
    );
    expect(acknowledged).toBe(true);
    expect(await page.getByTestId('cancel-optimize').textContent()).toBe('Cancelling…');
    expect(await page.getByTestId('cancel-optimize').isDisabled()).toBe(true);
    // the held-out re-scoring of the best point so far: a phase of its own, with its own progress
    await expect.poll(() => page.getByTestId('optimize-live').getAttribute('data-phase'), { timeout: 30_000 }).toBe('holdout');
    expect(await page.getByTestId('phase-optimize').textContent()).toBe('Re-scoring on held-out seeds');
    expect((await page.getByTestId('optimize-live').textContent())?.replace(/\s+/g, ' ')).toMatch(/Re-scoring on held-out seeds: \d+ of \d+ rollouts/);
    await shot('optimizer-rescoring');
    const stoppedAt = Number(await page.getByTestId('optimize-evaluations').textContent());
    await expect.poll(() => page.getByTestId('optimize-outcome').textContent(), { timeout: 60_000 }).toMatch(/^\s*Cancelled/);
    const outcome = (await page.getByTestId('optimize-outcome').textContent()) ?? '';
    const evaluations = Number(/(\d+) evaluations/.exec(outcome)![1]);
    // one count: what the live line said when the search stopped is what the result says
    expect(evaluations).toBe(stoppedAt);
    expect(evaluations).toBeLessThan(1000);
    await setField('Evaluations per restart', '6');
    await setField('Restarts', '1');
  }, 120_000);

  it('compares the optimized policy with the baseline on the same terrains, both return maps in one plot', async () => {
    await t.view('compare');
    await page.getByTestId('start-compare').click();
    await expect.poll(() => page.getByTestId('paired-difference').count(), { timeout: 60_000 }).toBe(1);
    expect(await page.getByTestId('paired-difference').textContent()).toMatch(/^-?\d+\.\d %$/);
    const maps = await t.option('figure-compare-maps');
    const ids = (maps.series as { id: string }[]).map((x) => x.id);
    expect(ids).toEqual(expect.arrayContaining(['map-a', 'map-b', 'diagonal', 'fixed-a', 'fixed-b']));
    expectLegendsWhole(maps);
    expectLegendsWhole(await t.option('figure-compare'));
    // a readable plot: the grid at least 300 px on each side
    const grid = (maps.grid as { top: number }[])[0];
    const box = (await page.getByTestId('figure-compare-maps').boundingBox())!;
    expect(box.height - grid.top - 72).toBeGreaterThan(300);
    expect(box.width).toBeGreaterThan(600);
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

  /** Clicks the cell of `series` whose data item is `item` ([x, y, value, index]) in a cell map. */
  async function clickCell(testId: string, item: number[]) {
    const at = await t.pixel(testId, [item[0], item[1]]);
    await page.mouse.click(at.x, at.y);
  }
  const seriesData = (option: Record<string, unknown>, id: string) => ((option.series as { id: string; data: number[][] }[]).find((x) => x.id === id)?.data ?? []);

  it('draws the stability regions on round-tick axes named by their labels, marks the scenario, and loads a clicked cell', async () => {
    await t.view('scan');
    await page.locator('#set-scan-x-n').fill('11'); // the horizontal axis: 11 × 16 cells
    await page.locator('#set-scan-x-n').press('Tab');
    await page.getByTestId('start-scan').click();
    await expect.poll(() => revision('figure-scan'), { timeout: 60_000 }).toBeGreaterThan(0);
    const option = await t.option('figure-scan');
    expectLegendsWhole(option);
    const [x] = option.xAxis as { name: string }[];
    const [y] = option.yAxis as { name: string }[];
    expect([x.name, y.name]).toEqual(['Attack angle at apex (°)', 'Retraction rate (°/s)']);
    // the scenario in use (62° at apex, 40°/s) is marked
    expect(seriesData(option, 'current')).toEqual([[62, 40]]);
    await shot('stability-regions');
    // a click on a cell puts its two values into the scenario, and one undo takes them out again
    const cell = seriesData(option, 'stable').find((c) => c[0] !== 62 && c[1] !== 40)!;
    await clickCell('figure-scan', cell);
    await expect.poll(() => field('Attack angle at apex').inputValue()).toBe(String(cell[0]));
    expect(await field('Retraction rate').inputValue()).toBe(String(cell[1]));
    expect(await t.notices()).toContain('Point loaded from the stability map');
    await page.getByTestId('undo').click();
    await expect.poll(() => field('Attack angle at apex').inputValue()).toBe('62');
    expect(await field('Retraction rate').inputValue()).toBe('40');
    await t.dismissNotices();
  }, 120_000);

  it('runs the basin (after a cancel), marks the start apex and loads a clicked cell\'s start apex', async () => {
    await t.view('basin');
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
    await t.dismissNotices();
    const option = await t.option('figure-basin');
    expectLegendsWhole(option);
    // the demo's start apex: 0.45 m at 3.35 m/s (scenarios/demo.json)
    expect(seriesData(option, 'current')).toEqual([[3.35, 0.45]]);
    // round ticks with the decimals their step needs (no grid value such as 0.49171 on an axis)
    const ticks = ((option.yAxis as { axisLabel: { customValues: number[] } }[])[0].axisLabel.customValues);
    for (const v of ticks) expect(Math.abs(v * 100 - Math.round(v * 100))).toBeLessThan(1e-9);
    await shot('basin');
    const cell = seriesData(option, 'converged').find((c) => Math.abs(c[1] - 0.45) > 0.02)!;
    await clickCell('figure-basin', cell);
    await expect.poll(() => field('Start apex height').inputValue()).toBe(String(Number(cell[1].toPrecision(12))));
    expect(await field('Start forward speed').inputValue()).toBe(String(Number(cell[0].toPrecision(12))));
    expect(await t.notices()).toContain('Start apex loaded from the basin');
    await page.keyboard.press('Control+z');
    await expect.poll(() => field('Start apex height').inputValue()).toBe('0.45');
    expect(await field('Start forward speed').inputValue()).toBe('3.35');
    await t.dismissNotices();
  }, 120_000);

  it('zooms the survival axis to the data, with the Wilson band in view', async () => {
    await t.view('montecarlo');
    await page.getByTestId('start-montecarlo').click();
    await expect.poll(() => page.getByTestId('survival').count(), { timeout: 60_000 }).toBe(1);
    expect(await page.getByTestId('survival').textContent()).toMatch(/^\d+ \/ 1000 \(\d+\.\d %\)$/);
    const option = await t.option('figure-survival');
    expectLegendsWhole(option);
    const axis = (option.yAxis as { min: number; max: number }[])[0];
    const band = seriesData(option, 'survival-band');
    const lowest = Math.min(...band.map((b) => b[1]));
    // the demo survives more than 90 % of 1000 rollouts: an axis from 0 would flatten it
    expect(lowest).toBeGreaterThan(0.9);
    expect(axis.max).toBe(1);
    expect(axis.min).toBeGreaterThan(0.8);
    expect(axis.min).toBeLessThanOrEqual(lowest);
    // the band at the last stride is tens of pixels high, not a hairline
    const last = band[band.length - 1];
    const lo = await t.pixel('figure-survival', [last[0], last[1]]);
    const hi = await t.pixel('figure-survival', [last[0], last[2]]);
    expect(lo.y - hi.y).toBeGreaterThan(20);
    await shot('monte-carlo');
  }, 90_000);

  it('animates the stride and draws the peak-force limit beside the friction limit', async () => {
    await t.view('stride');
    await page.getByTestId('play').click();
    await page.waitForTimeout(1200);
    await page.getByTestId('pause').click();
    const scrub = page.getByLabel('Time', { exact: true });
    expect(Number(await scrub.inputValue())).toBeGreaterThan(0);
    await scrub.focus();
    const at = Number(await scrub.inputValue());
    await page.keyboard.press('ArrowRight');
    expect(Number(await scrub.inputValue())).toBe(at + 1);
    await expect.poll(() => revision('figure-scene'), { timeout: 20_000 }).toBeGreaterThan(1);
    await shot('stride');
    await expect.poll(() => revision('figure-forces')).toBeGreaterThan(0);
    const option = await t.option('figure-forces');
    expectLegendsWhole(option);
    const line = (id: string) => (option.series as { id: string; data: number[][]; yAxisIndex: number }[]).find((x) => x.id === id);
    // the demo study's limits (scenarios/demo-study.json): 900 N and μ 0.8
    expect(line('force-limit')?.data.map((p) => p[1])).toEqual([900, 900]);
    expect(line('force-limit')?.yAxisIndex).toBe(0);
    expect(line('friction-limit')?.data.map((p) => p[1])).toEqual([0.8, 0.8]);
    expect((option.yAxis as { max: number }[])[0].max).toBeGreaterThanOrEqual(900);
    // two sub-plots, each a readable height, inside the figure
    const box = (await page.getByTestId('figure-forces').boundingBox())!;
    const [upper, lower] = option.grid as { top: number; height: number; bottom: number }[];
    expect(upper.height).toBeGreaterThan(180);
    expect(box.height - lower.bottom - lower.top).toBeGreaterThan(100);
    await page.getByTestId('figure-forces').scrollIntoViewIfNeeded();
    await shot('stride-forces');
  });

  it('saves a figure as SVG and PNG and a table as CSV, from the view', async () => {
    await t.view('map');
    await expect.poll(() => page.getByTestId('fixed-point').count(), { timeout: 20_000 }).toBeGreaterThan(0);
    const svg = await t.download(() => page.getByTestId('figure-map-svg').click());
    expect(svg.name).toBe('return-map.svg');
    const text = svg.bytes.toString('utf8');
    expect(text).toMatch(/^<svg[^>]+width="1280" height="800"/);
    expect(text).toContain('Apex return map'); // the file keeps its title
    expect(text).toContain('next apex height P(y) (m)');
    const png = await t.download(() => page.getByTestId('figure-map-png').click());
    expect(png.name).toBe('return-map.png');
    // PNG signature and IHDR size (ISO/IEC 15948): 2560 × 1600, twice the file size
    expect([...png.bytes.subarray(0, 8)]).toEqual([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]);
    expect([png.bytes.readUInt32BE(16), png.bytes.readUInt32BE(20)]).toEqual([2560, 1600]);
    const csv = await t.download(() => page.getByTestId('fixed-points-csv').click());
    expect(csv.name).toBe('fixed-points.csv');
    const lines = csv.bytes.toString('utf8').trim().split('\r\n');
    expect(lines[0]).toBe('Apex (m),Speed (m/s),Slope,State');
    // the exact numbers of the same analysis in Node
    const node = await apexReturnMap(demoWithAttack(62));
    expect(lines.length).toBe(1 + node.fixed_points.length);
    const first = lines[1].split(',');
    expect(Number(first[0])).toBeCloseTo(node.fixed_points[0].apex_height_m, 10);
    expect(first[3]).toMatch(/stable|unstable/);
    const strides = await t.view('stride').then(() => t.download(() => page.getByTestId('strides-csv').click()));
    expect(strides.bytes.toString('utf8').split('\r\n')[0]).toBe('#,Attack (°),Contact (s),Peak F (N),|Fx/Fy|');
  });

  it('replaces a worker that dies and keeps the work', async () => {
    await page.goto(`${session.url()}?diagnostics`);
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

  it('fits the header at 1024 to 1800 px, idle, with a job and with two jobs running: no control or status cut at the window\'s edge', async () => {
    const overflow = () => page.locator('header').evaluate((h) => h.scrollWidth - h.clientWidth);
    const widths = [1024, 1280, 1440];
    try {
      for (const width of widths) {
        await page.setViewportSize({ width, height: 900 });
        await page.waitForTimeout(100);
        expect(await overflow(), `idle at ${width} px`).toBeLessThanOrEqual(0);
      }
    } finally {
      await page.setViewportSize(SCREEN);
    }
    await t.view('montecarlo');
    await page.locator('#set-montecarlo-rollouts').fill('500000');
    await page.locator('#set-montecarlo-rollouts').press('Tab');
    await page.getByTestId('start-montecarlo').click();
    await page.getByTestId('job-montecarlo').waitFor();
    try {
      for (const width of widths) {
        await page.setViewportSize({ width, height: 900 });
        await page.waitForTimeout(100);
        expect(await overflow(), `a job running at ${width} px`).toBeLessThanOrEqual(0);
        const cancel = (await page.getByTestId('job-montecarlo').getByRole('button').boundingBox())!;
        expect(cancel.x + cancel.width, `the job's cancel at ${width} px`).toBeLessThanOrEqual(width);
      }
      // a second job: both close up below 1400 px, each cancel still in the window
      await t.view('optimize');
      await setField('Evaluations per restart', '500');
      await page.getByTestId('start-optimize').click();
      await page.getByTestId('job-optimize').waitFor();
      for (const width of [1024, 1200, 1280, 1440, 1600, 1800]) {
        await page.setViewportSize({ width, height: 900 });
        await page.waitForTimeout(100);
        expect(await overflow(), `two jobs running at ${width} px`).toBeLessThanOrEqual(0);
        for (const name of ['montecarlo', 'optimize']) {
          const cancel = (await page.getByTestId(`job-${name}`).getByRole('button').boundingBox())!;
          expect(cancel.x + cancel.width, `the ${name} job's cancel at ${width} px`).toBeLessThanOrEqual(width);
        }
      }
    } finally {
      await page.setViewportSize(SCREEN);
      for (const name of ['montecarlo', 'optimize']) {
        if ((await page.getByTestId(`job-${name}`).count()) > 0) await page.getByTestId(`job-${name}`).getByRole('button').click();
        await expect.poll(() => page.getByTestId(`job-${name}`).count(), { timeout: 60_000 }).toBe(0);
      }
    }
  }, 120_000);

  it('had no uncaught page errors', () => {
    expect(pageErrors).toEqual([]);
  });
});
