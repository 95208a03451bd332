// The workbench's main thread while an optimization runs: every task over 50 ms (the browser's
// own "long task", PerformanceObserver type 'longtask') from the click on Optimize to the
// result, in Debian's headless Chromium against `vite preview`. Target: none. The optimizer view
// stays on screen, so the live convergence figure is redrawn throughout (the worst case).
//
// `node test/bench/ui-longtask.mjs` runs it alone; test/bench/run.mjs calls benchLongTasks.

import { pathToFileURL } from 'node:url';
import { goal } from './goals.mjs';
import { ensureBuilt, haveChromium, launchBrowser, startPreview, CHROMIUM } from '../e2e/harness.mjs';

const EVALUATIONS = 40;
const RESTARTS = 2;

export async function benchLongTasks(log = console.log) {
  if (!haveChromium()) {
    log(`skipped: ${CHROMIUM} is absent (apt-get install -y chromium)`);
    goal('(f) workbench long tasks', 'none > 50 ms', `skipped: ${CHROMIUM} is absent`, null);
    return null;
  }
  ensureBuilt(log);
  const preview = await startPreview();
  const browser = await launchBrowser();
  try {
    const page = await browser.context.newPage();
    await page.addInitScript(() => {
      const tasks = [];
      window.__pronkLongTasks = tasks;
      new PerformanceObserver((list) => {
        for (const entry of list.getEntries()) tasks.push({ start: entry.startTime, duration: entry.duration });
      }).observe({ type: 'longtask', buffered: true });
    });
    await page.goto(preview.url);
    await page.locator('#tab-map').click();
    await page.getByTestId('fixed-point').first().waitFor({ timeout: 30_000 });
    const set = async (label, value) => {
      const field = page.getByLabel(label, { exact: true });
      await field.fill(value);
      await field.press('Tab');
    };
    await set('Evaluations per restart', String(EVALUATIONS));
    await set('Restarts', String(RESTARTS));
    await page.locator('#tab-optimize').click();
    await page.waitForTimeout(500); // let the page settle: the window below is the search alone
    const from = await page.evaluate(() => performance.now());
    await page.getByTestId('start-optimize').click();
    await page.getByTestId('optimize-outcome').waitFor({ timeout: 600_000 });
    const to = await page.evaluate(() => performance.now());
    const { during, loading } = await page.evaluate(
      ([a, b]) => {
        const all = window.__pronkLongTasks;
        return { during: all.filter((t) => t.start >= a && t.start <= b), loading: all.filter((t) => t.start < a) };
      },
      [from, to],
    );
    const outcome = ((await page.getByTestId('optimize-outcome').textContent()) ?? '').replace(/\s+/g, ' ').trim();
    const longest = during.reduce((m, t) => Math.max(m, t.duration), 0);
    const seconds = (to - from) / 1000;
    log(`optimization in the workbench: ${RESTARTS} restarts x ${EVALUATIONS} evaluations of the demo study, ${seconds.toFixed(1)} s (${outcome})`);
    log(
      during.length === 0
        ? '  main thread: no task over 50 ms while it ran (target: none)'
        : `  main thread: ${during.length} tasks over 50 ms while it ran, longest ${longest.toFixed(0)} ms (target: none); ` +
            `the longest: ${during.map((t) => t.duration).sort((a, b) => b - a).slice(0, 5).map((d) => d.toFixed(0)).join(', ')} ms`,
    );
    const loadLongest = loading.reduce((m, t) => Math.max(m, t.duration), 0);
    log(`  first load (before the click): ${loading.length} long tasks, longest ${loadLongest.toFixed(0)} ms (target: < 200 ms each)`);
    goal('(f) workbench: longest task during a search', 'none > 50 ms', `${longest.toFixed(0)} ms longest, ${during.length} over 50 ms`, longest <= 50);
    goal('(f) workbench: first load, longest task', '< 200 ms', `${loadLongest.toFixed(0)} ms (${loading.length} long tasks)`, loadLongest < 200);
    return { longest_ms: longest, long_tasks: during.length, seconds };
  } finally {
    await browser.close();
    await preview.stop();
  }
}

if (import.meta.url === pathToFileURL(process.argv[1] ?? '').href) {
  benchLongTasks().catch((e) => {
    console.error(e);
    process.exitCode = 1;
  });
}
