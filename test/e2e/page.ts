// What the browser tests do to the workbench page: fields by their labels, the text beside a field,
// files opened through the Open… input, downloads read back, the figures' drawn options read from
// the chart element (Chart.svelte attaches them for tests), screenshots at 1440 × 900.

import { mkdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import type { Download, Page } from 'playwright-core';
import { afterAll, beforeAll, expect } from 'vitest';
import { ensureBuilt, launchBrowser, ROOT, startPreview } from './harness.mjs';

export const SHOTS = join(ROOT, 'test-output/screenshots');
/** The size every screenshot is taken at. */
export const SCREEN = { width: 1440, height: 900 };

/**
 * One workbench page for a describe block: `vite preview` of the production build (built first if
 * need be), Chromium at SCREEN, the page's uncaught errors pushed to `errors`, everything closed
 * after the block. `open(page)` receives the page once it has loaded (with `waitForMap`, once the
 * demo's return map shows); the returned `url()` is the preview's address.
 */
export function workbenchSession(open: (page: Page) => void, errors: string[], { waitForMap = false } = {}) {
  let preview: Awaited<ReturnType<typeof startPreview>> | undefined;
  let browser: Awaited<ReturnType<typeof launchBrowser>> | undefined;
  beforeAll(async () => {
    mkdirSync(SHOTS, { recursive: true });
    ensureBuilt((m) => console.log(`e2e: ${m}`));
    preview = await startPreview();
    browser = await launchBrowser({ viewport: SCREEN });
    const page = await browser.context.newPage();
    page.on('pageerror', (e) => errors.push(e.message));
    await page.goto(preview.url);
    if (waitForMap) await page.getByTestId('fixed-point').first().waitFor({ timeout: 30_000 });
    open(page);
  }, 120_000);
  afterAll(async () => {
    await browser?.close();
    await preview?.stop();
  });
  return { url: () => preview!.url };
}

export function pageTools(page: () => Page) {
  const field = (label: string) => page().getByLabel(label, { exact: true });
  const tools = {
    field,
    async setField(label: string, value: string) {
      await field(label).fill(value);
      await field(label).press('Tab');
    },
    /** The text linked to a field by aria-describedby (its problem or hint). */
    async describedBy(label: string, nth = 0): Promise<string> {
      return page()
        .getByLabel(label, { exact: true })
        .nth(nth)
        .evaluate((el) =>
          (el.getAttribute('aria-describedby') ?? '')
            .split(/\s+/)
            .map((id) => document.getElementById(id)?.textContent ?? '')
            .join(' ')
            .trim(),
        );
    },
    async shot(name: string) {
      const size = page().viewportSize();
      expect(size).toEqual(SCREEN);
      await page().screenshot({ path: join(SHOTS, `${name}.png`) });
    },
    async view(name: string) {
      await page().locator(`#tab-${name}`).click();
      await expect.poll(() => page().locator(`#tab-${name}`).getAttribute('aria-selected')).toBe('true');
    },
    async open(name: string, content: string) {
      await page().getByTestId('open-file').setInputFiles({ name, mimeType: 'application/json', buffer: Buffer.from(content) });
    },
    async notices(): Promise<string> {
      return (await page().getByTestId('notices').textContent()) ?? '';
    },
    async dismissNotices() {
      for (const button of await page().getByTestId('notices').getByRole('button').all()) await button.click().catch(() => undefined);
    },
    /** Starts a download by `click` and returns its file name and bytes. */
    async download(click: () => Promise<unknown>): Promise<{ name: string; bytes: Buffer }> {
      const [d] = (await Promise.all([page().waitForEvent('download'), click()])) as [Download, unknown];
      return { name: d.suggestedFilename(), bytes: readFileSync((await d.path())!) };
    },
    /** The ECharts option a figure is drawn with (as getOption returns it). */
    async option(testId: string): Promise<Record<string, unknown>> {
      return page()
        .getByTestId(testId)
        .evaluate((el) => {
          const chart = (el as unknown as { pronkChart: { option(): unknown } }).pronkChart;
          // functions (formatters) do not cross: the data does
          return JSON.parse(JSON.stringify(chart.option())) as Record<string, unknown>;
        });
    },
    /** The page position of a data point of a figure's grid. */
    async pixel(testId: string, value: number[], gridIndex = 0): Promise<{ x: number; y: number }> {
      const chart = page().getByTestId(testId);
      const box = (await chart.boundingBox())!;
      const [x, y] = await chart.evaluate(
        (el, args) => (el as unknown as { pronkChart: { toPixel(v: number[], g: number): number[] } }).pronkChart.toPixel(args.value, args.gridIndex),
        { value, gridIndex },
      );
      return { x: box.x + x, y: box.y + y };
    },
    async revision(testId: string): Promise<number> {
      return Number(await page().getByTestId(testId).getAttribute('data-revision'));
    },
  };
  return tools;
}

/** Every legend of a drawn option is a plain (never a paged) legend, and together they list every named series. */
export function expectLegendsWhole(option: Record<string, unknown>) {
  const legends = option.legend as { type?: string; data: (string | { name: string })[] }[];
  expect(legends.length).toBeGreaterThan(0);
  for (const l of legends) expect(l.type ?? 'plain').toBe('plain');
  const listed = legends.flatMap((l) => l.data.map((d) => (typeof d === 'string' ? d : d.name)));
  const named = (option.series as { name?: string }[]).map((s) => s.name).filter((n): n is string => !!n);
  expect(new Set(listed)).toEqual(new Set(named));
}

/** Two boxes overlap when they share an area (touching edges do not). */
export function overlaps(a: { x: number; y: number; width: number; height: number }, b: { x: number; y: number; width: number; height: number }): boolean {
  return a.x < b.x + b.width - 0.5 && b.x < a.x + a.width - 0.5 && a.y < b.y + b.height - 0.5 && b.y < a.y + a.height - 0.5;
}
