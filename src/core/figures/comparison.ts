// Figure 7: two policies side by side on the same random terrains (common random numbers: the same
// seed, terrain and rollout count, so rollout r meets the same ground under both). Left: survival
// after each stride for both, each with its Wilson 95 % band. Right (when both step-tolerance
// results are given): the largest single step down and up each survives, as bars.
//
// Series ids: survival-band-a, survival-a, survival-band-b, survival-b, and with step results
// step-tolerance-a / step-tolerance-b (data [max_step_down_m, max_step_up_m]).

import type { BarSeriesOption, LineSeriesOption, SeriesOption, XAXisComponentOption, YAXisComponentOption } from 'echarts';
import type { RobustnessResult } from '../analysis/robustness.js';
import type { StepToleranceResult } from '../analysis/stepdown.js';
import { InputError, describeFound, type InputIssue } from '../errors.js';
import { bandSeries, survivalAxis, survivalBand, terrainText } from './survival.js';
import { PALETTE, TYPE, baseOption, categoryXAxis, frameOf, header, num, tooltip, valueXAxis, valueYAxis, type FigureOption, type Frame } from './theme.js';

export interface PolicyRun {
  /** The policy's name in the legend, e.g. "baseline" or a file name. */
  label: string;
  robustness: RobustnessResult;
  stepdown?: StepToleranceResult;
}

export interface ComparisonFigureOptions {
  title?: string;
  frame?: Frame;
}

const STYLE = {
  a: { color: PALETTE.deepBlue, band: PALETTE.sky, dash: 'solid' as const, symbol: 'circle' },
  b: { color: PALETTE.amber, band: PALETTE.amber, dash: 'dashed' as const, symbol: 'triangle' },
};

/** The two runs must share the terrains: otherwise the comparison is not on common random numbers. */
function checkSameTerrains(a: PolicyRun, b: PolicyRun): void {
  const issues: InputIssue[] = [];
  const same = (path: string, x: unknown, y: unknown, what: string) => {
    if (x !== y) issues.push({ path: `b.robustness.${path}`, expected: `${describeFound(x)}, the ${what} of a (the same terrains for both policies)`, found: describeFound(y) });
  };
  const ra = a.robustness;
  const rb = b.robustness;
  same('terrain.seed', ra.terrain.seed, rb.terrain.seed, 'seed');
  same('terrain.kind', ra.terrain.kind, rb.terrain.kind, 'terrain kind');
  same('terrain.sigma_m', ra.terrain.sigma_m, rb.terrain.sigma_m, 'terrain sigma');
  same('rollouts', ra.rollouts, rb.rollouts, 'rollout count');
  same('strides', ra.strides, rb.strides, 'stride count');
  if (a.stepdown && b.stepdown) same('stepdown.strides_after', a.stepdown.strides_after, b.stepdown.strides_after, 'strides after the step');
  if (issues.length) throw new InputError(issues.map((i) => (i.path.startsWith('b.robustness.stepdown') ? { ...i, path: 'b.stepdown.strides_after' } : i)));
}

const pct = (x: number) => `${num(100 * x, 3)} %`;

export function policyComparisonFigure(a: PolicyRun, b: PolicyRun, options: ComparisonFigureOptions = {}): FigureOption {
  checkSameTerrains(a, b);
  const withSteps = a.stepdown !== undefined && b.stepdown !== undefined;
  const series: SeriesOption[] = [];
  for (const [key, run] of [['a', a], ['b', b]] as const) {
    const style = STYLE[key];
    const r = run.robustness;
    series.push(
      bandSeries(`survival-band-${key}`, `${run.label}: Wilson 95 %`, survivalBand(r), style.band),
      {
        id: `survival-${key}`,
        name: `${run.label}: survival`,
        type: 'line',
        data: r.survival_by_stride.map((s) => [s.stride, s.survival]),
        symbol: style.symbol,
        symbolSize: r.survival_by_stride.length <= 60 ? 7 : 0,
        lineStyle: { width: 2.5, type: style.dash, color: style.color },
        itemStyle: { color: style.color },
        z: 3,
        tooltip: {
          formatter: (p: unknown) => {
            const s = r.survival_by_stride[(p as { dataIndex: number }).dataIndex];
            return `${run.label}, after stride ${s.stride}: survival ${pct(s.survival)} (Wilson 95 %: ${pct(s.wilson95[0])} to ${pct(s.wilson95[1])})`;
          },
        },
      } satisfies LineSeriesOption,
    );
  }
  const ra = a.robustness;
  const xAxis: XAXisComponentOption[] = [
    valueXAxis('stride (0-based index)', { gridIndex: 0, min: 0, max: Math.max(1, ra.strides - 1), minInterval: 1 }),
  ];
  const lowest = Math.min(...[a, b].flatMap((run) => [run.robustness.wilson95[0], ...run.robustness.survival_by_stride.map((s) => s.wilson95[0])]));
  const yAxis: YAXisComponentOption[] = [survivalAxis('survival (rollouts still running)', lowest, { gridIndex: 0 })];
  const frame = frameOf(options.frame);
  const grids: { left: number | string; right: number | string; top: number; bottom: number }[] = [
    { left: 96, right: withSteps ? '38%' : 48, top: 0, bottom: 72 },
  ];
  if (withSteps) {
    // the bars' axis on the right, its name outside: nothing of it reaches into the survival plot
    grids.push({ left: '68%', right: 84, top: 0, bottom: 72 });
    xAxis.push(categoryXAxis('', ['step down', 'step up'], { gridIndex: 1, axisLabel: { interval: 0 } }));
    yAxis.push(valueYAxis('largest single step survived (mm)', { gridIndex: 1, min: 0, position: 'right', nameGap: 50, axisLabel: { formatter: (v: number) => num(v * 1000, 4) } }));
    for (const [key, run] of [['a', a], ['b', b]] as const) {
      const step = run.stepdown!;
      series.push({
        id: `step-tolerance-${key}`,
        name: `${run.label}: step tolerance`,
        type: 'bar',
        xAxisIndex: 1,
        yAxisIndex: 1,
        data: [step.max_step_down_m, step.max_step_up_m],
        barMaxWidth: 56,
        itemStyle: { color: STYLE[key].color, borderColor: PALETTE.ink, borderWidth: 1, ...(key === 'b' ? { decal: { symbol: 'rect', dashArrayX: [1, 0], dashArrayY: [4, 3], rotation: -Math.PI / 4, color: 'rgba(34,38,46,0.35)' } } : {}) },
        label: { show: true, position: 'top', fontSize: TYPE.label, color: PALETTE.ink, formatter: (p: unknown) => num(((p as { value: number }).value) * 1000, 3) },
      } satisfies BarSeriesOption);
    }
  }
  const line = (run: PolicyRun) => `${run.label} ${run.robustness.survived} (${pct(run.robustness.survival)})`;
  const subtitle =
    `the same ${ra.rollouts} terrains for both (${terrainText(ra)}; rollout r on stream r), ${ra.strides} strides each\n` +
    `survived all strides: ${line(a)}, ${line(b)}` +
    (withSteps ? `; steps: one permanent drop or rise, survived for ${a.stepdown!.strides_after} strides after, to ${num(a.stepdown!.resolution_m * 1000, 3)} mm` : '');
  const head = header(frame, options.title ?? `${a.label} vs ${b.label} on common random terrain`, subtitle, series.map((s) => String(s.name)));
  for (const g of grids) g.top = head.top;
  return {
    ...baseOption(`Policies ${a.label} and ${b.label} compared on the same ${ra.rollouts} random terrains.`),
    ...(head.title ? { title: head.title } : {}),
    legend: head.legend,
    tooltip: tooltip(),
    grid: grids,
    xAxis,
    yAxis,
    series,
  };
}
