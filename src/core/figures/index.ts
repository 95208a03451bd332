// Pronk's figures: pure functions from analysis results to Apache ECharts option objects, the same
// in the browser workbench (echarts.init(element).setOption(option)) and in the CLI's SVG files
// (svg.ts, Node only). No DOM, no I/O, nothing imported at run time but Pronk's own errors.

import { InputError, describeFound } from '../errors.js';
import type { BasinResult } from '../analysis/basin.js';
import type { LateralBasinResult } from '../analysis/lateral-basin.js';
import type { LateralScanResult } from '../analysis/lateral-scan.js';
import type { ReturnMapResult } from '../analysis/return-map.js';
import type { RobustnessResult } from '../analysis/robustness.js';
import type { ScanResult } from '../analysis/scan.js';
import { basinFigure } from './basin.js';
import { policyComparisonFigure } from './comparison.js';
import { convergenceFigure } from './convergence.js';
import { lateralBasinFigure } from './lateral-basin.js';
import { lateralScanFigure } from './lateral-scan.js';
import { returnMapFigure } from './return-map.js';
import { stabilityRegionsFigure } from './stability-regions.js';
import { stanceForceFigure } from './stance-forces.js';
import { strideScene } from './stride-scene.js';
import { survivalFigure } from './survival.js';
import type { FigureOption } from './theme.js';

export { basinFigure, basinCellPosition, type BasinFigureOptions } from './basin.js';
export { policyComparisonFigure, type ComparisonFigureOptions, type PolicyRun } from './comparison.js';
export { convergenceFigure, type ConvergenceFigureOptions, type ConvergenceRestart } from './convergence.js';
export { lateralBasinFigure, lateralBasinCellPosition, type LateralBasinFigureOptions } from './lateral-basin.js';
export { lateralScanFigure, type LateralScanFigureOptions } from './lateral-scan.js';
export { cobweb, returnMapComparisonFigure, returnMapFigure, type LabelledMap, type ReturnMapFigureOptions } from './return-map.js';
export { cellAxis, cellEdges, cellSeries, currentPointSeries, type CellDatum } from './cells.js';
export { parameterName, parameterTitle, unitOfPath, type ParameterName } from './labels.js';
export { stabilityRegionsFigure, type StabilityRegionsFigureOptions } from './stability-regions.js';
export { stanceForceFigure, stanceSamples, type StanceBody, type StanceForceFigureOptions, type StanceSamples } from './stance-forces.js';
export { groundFromTrajectory, strideScene, type GroundProfile, type SceneView } from './stride-scene.js';
export { bandSeries, survivalAxis, survivalBand, survivalFigure, type SurvivalFigureOptions } from './survival.js';
export { FIGURE_SIZE, FILE_FRAME, OUTCOME_COLORS, PALETTE, SERIES_COLORS, STABILITY_COLORS, STATE_COLORS, STATE_GLYPHS, legendRows, lightness, niceTicks, type FigureOption, type Frame, type StateName } from './theme.js';

/** Every figure builder by name. */
export const FIGURES = {
  /** Figure 1, `pronk map`: returnMapFigure(result: ReturnMapResult, options?) */
  returnMap: returnMapFigure,
  /** Figure 2, `pronk scan`: stabilityRegionsFigure(result: ScanResult, options?) */
  stabilityRegions: stabilityRegionsFigure,
  /** Figure 3, `pronk basin`: basinFigure(result: BasinResult, options?) */
  basin: basinFigure,
  /** Figure 4, `pronk robustness`: survivalFigure(result: RobustnessResult, options?) */
  survival: survivalFigure,
  /** Figure 5, simulate's trajectory: stanceForceFigure(trajectory, body, options?) */
  stanceForces: stanceForceFigure,
  /** Figure 6, an optimization result's restarts: convergenceFigure(restarts, options?) */
  convergence: convergenceFigure,
  /** Figure 7, two policies on the same seeds: policyComparisonFigure(a, b, options?) */
  policyComparison: policyComparisonFigure,
  /** Figure 8, one animation frame: strideScene(trajectory, index, terrain?, view?) */
  strideScene,
  /** Figure 9, `pronk basin` on a lateral scenario: lateralBasinFigure(result: LateralBasinResult, options?) */
  lateralBasin: lateralBasinFigure,
  /** Figure 10, `pronk scan` on a lateral scenario: lateralScanFigure(result: LateralScanResult, options?) */
  lateralScan: lateralScanFigure,
} as const;

export type FigureName = keyof typeof FIGURES;

/** The commands whose result has a figure of its own (`--plot`), and `pronk merge` of them. */
export const PLOTTABLE_COMMANDS = ['map', 'scan', 'basin', 'robustness', 'optimize'] as const;
export type PlottableCommand = (typeof PLOTTABLE_COMMANDS)[number];

/** The figure of a command's result: map -> return map, scan -> stability regions, basin, robustness -> survival, optimize -> convergence. */
export function figureForCommand(command: string, result: unknown): FigureOption {
  switch (command) {
    case 'map':
      return returnMapFigure(result as ReturnMapResult);
    case 'scan':
      // a lateral scenario's scan classes its cells' gaits: stable, neutral, unstable, none
      return result !== null && typeof result === 'object' && 'neutral' in ((result as { counts?: object }).counts ?? {})
        ? lateralScanFigure(result as LateralScanResult)
        : stabilityRegionsFigure(result as ScanResult);
    case 'basin':
      // a lateral scenario's basin grids heading and angular-velocity errors
      return result !== null && typeof result === 'object' && 'headings_deg' in result
        ? lateralBasinFigure(result as LateralBasinResult)
        : basinFigure(result as BasinResult);
    case 'robustness':
      return survivalFigure(result as RobustnessResult);
    case 'optimize': {
      const r = result as { restarts: Parameters<typeof convergenceFigure>[0]; best_restart: number };
      return convergenceFigure(r.restarts, { bestRestart: r.best_restart });
    }
    default:
      throw new InputError([{ path: 'command', expected: `a command with a figure (${PLOTTABLE_COMMANDS.join(', ')})`, found: describeFound(command) }]);
  }
}
