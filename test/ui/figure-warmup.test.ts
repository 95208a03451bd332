// @vitest-environment happy-dom
// ECharts' drawing code run once ahead of the first result (src/ui/lib/figure-warmup.ts): one
// chart, off the page, in an idle moment, with the real basin figure of a small grid (its cell
// series, the continuous colour bar and the legend: the parts a result's first frame compiled),
// disposed after; once per page, and a failure there stays there.
import { describe, expect, it, vi } from 'vitest';
import { warmFigureCode } from '../../src/ui/lib/figure-warmup.js';

describe('figure code warmed ahead of the first result', () => {
  it('draws the sample basin off the page once, in an idle callback, and disposes of it', () => {
    const idle: (() => void)[] = [];
    vi.stubGlobal('requestIdleCallback', (run: () => void) => idle.push(run));
    const calls: { element: HTMLElement; options: unknown; option?: Record<string, unknown>; disposed: boolean }[] = [];
    const init = (element: HTMLElement, _theme: unknown, options: unknown) => {
      const call = { element, options, option: undefined as Record<string, unknown> | undefined, disposed: false };
      calls.push(call);
      return {
        setOption(option: unknown) {
          call.option = option as Record<string, unknown>;
          throw new Error('a failing draw stays in the warm-up');
        },
        dispose() {
          call.disposed = true;
        },
      };
    };
    warmFigureCode(init as never);
    warmFigureCode(init as never); // once per page
    expect(calls).toHaveLength(0); // nothing before the idle moment
    expect(idle).toHaveLength(1);
    expect(() => idle[0]()).not.toThrow();
    expect(calls).toHaveLength(1);
    const [call] = calls;
    expect(call.element.isConnected).toBe(false);
    expect(call.options).toMatchObject({ renderer: 'canvas', width: 640, height: 420 });
    expect(call.disposed).toBe(true);
    const option = call.option!;
    const series = option.series as { id: string; type: string; data: unknown[] }[];
    expect(series.filter((s) => s.type === 'custom').map((s) => [s.id, s.data.length])).toEqual([
      ['converged', 3],
      ['wandering', 3],
      ['fell', 3],
    ]);
    expect((option.visualMap as { type: string }[]).map((v) => v.type)).toEqual(['piecewise', 'piecewise', 'continuous']);
    expect(option.legend).toBeDefined();
    vi.unstubAllGlobals();
  });
});
