// Stability regions of the lateral leg-spring model: over a grid of two scenario parameters
// (e.g. the attachment offset and the touchdown angle, or the stiffness and the speed), each
// cell's periodic gaits at its own start energy (as `pronk map` finds them) and the best one's
// stability: none, unstable, neutral or stable, with the largest modulus of its reduced eigenvalues.

import type { Engine } from '../engine.js';
import { InputError } from '../errors.js';
import { type LateralScenario, parseLateralScenario } from '../models/lateral.js';
import type { Scenario } from '../scenario.js';
import { axisValues, checkAxisPath, type ScanAxis } from './scan.js';
import { lateralFixedPoints } from './lateral.js';

export type LateralScanClass = 'none' | 'unstable' | 'neutral' | 'stable';

export interface LateralScanCell {
  x: number;
  y: number;
  class: LateralScanClass;
  gaits: number;
  /** The most stable gait's speed, heading to the body axis and largest reduced eigenvalue modulus. */
  speed_m_per_s: number | null;
  heading_to_body_deg: number | null;
  largest_modulus: number | null;
}

export interface LateralScanResult {
  x: { path: string; values: number[] };
  y: { path: string; values: number[] };
  /** Row-major, y outer: cells[iy * nx + ix]. */
  cells: LateralScanCell[];
  counts: Record<LateralScanClass, number>;
}

function setAt(root: Record<string, unknown>, segments: readonly (string | number)[], value: number): void {
  let node = root as Record<string | number, unknown>;
  for (const s of segments.slice(0, -1)) node = node[s] as Record<string | number, unknown>;
  node[segments[segments.length - 1]] = value;
}

/** The cells of `range` (row-major, y outer). */
export function lateralScanRows(
  engine: Engine,
  s: LateralScenario,
  x: ScanAxis,
  y: ScanAxis,
  range: { start: number; end: number },
  onProgress?: (done: number, total: number) => void,
): LateralScanCell[] {
  // the paths name numeric fields of the (defaults-filled) lateral scenario
  const xs = checkAxisPath(s as unknown as Scenario, x, '--x');
  const ys = checkAxisPath(s as unknown as Scenario, y, '--y');
  const xv = axisValues(x);
  const yv = axisValues(y);
  const cells: LateralScanCell[] = [];
  const total = range.end - range.start;
  for (let i = range.start; i < range.end; i++) {
    const vx = xv[i % xv.length];
    const vy = yv[Math.floor(i / xv.length)];
    const raw = structuredClone(s) as unknown as Record<string, unknown>;
    setAt(raw, xs, vx);
    setAt(raw, ys, vy);
    let cell: LateralScenario;
    try {
      cell = parseLateralScenario(raw);
    } catch (error) {
      if (!(error instanceof InputError)) throw error;
      throw new InputError(error.issues.map((issue) => ({ ...issue, path: `cell ${x.path} = ${vx}, ${y.path} = ${vy}: ${issue.path}` })));
    }
    const map = lateralFixedPoints(engine, cell, { headingStarts: 24, rateStarts: 3 });
    const rank = { stable: 3, neutral: 2, unstable: 1 } as const;
    const largest = (f: (typeof map.fixed_points)[number]) => Math.max(...f.reduced_eigenvalues.map((z) => z.modulus));
    const best = [...map.fixed_points].sort((a, b) => rank[b.stability] - rank[a.stability] || largest(a) - largest(b))[0];
    cells.push({
      x: vx,
      y: vy,
      class: best ? best.stability : 'none',
      gaits: map.fixed_points.length,
      speed_m_per_s: best ? best.speed_m_per_s : null,
      heading_to_body_deg: best ? best.heading_to_body_deg : null,
      largest_modulus: best ? largest(best) : null,
    });
    onProgress?.(cells.length, total);
  }
  return cells;
}

/** The result from every cell's row, in order (the one-machine run and a merge both end here). */
export function finishLateralScan(x: ScanAxis, y: ScanAxis, cells: readonly LateralScanCell[]): LateralScanResult {
  const xv = axisValues(x);
  const yv = axisValues(y);
  if (cells.length !== xv.length * yv.length) {
    throw new InputError([{ path: 'rows', expected: `${xv.length * yv.length} cells`, found: `${cells.length}` }]);
  }
  const counts: Record<LateralScanClass, number> = { none: 0, unstable: 0, neutral: 0, stable: 0 };
  for (const c of cells) counts[c.class]++;
  return { x: { path: x.path, values: xv }, y: { path: y.path, values: yv }, cells: [...cells], counts };
}

export function lateralScan(
  engine: Engine,
  s: LateralScenario,
  x: ScanAxis,
  y: ScanAxis,
  onProgress?: (done: number, total: number) => void,
): LateralScanResult {
  const total = x.n * y.n;
  return finishLateralScan(x, y, lateralScanRows(engine, s, x, y, { start: 0, end: total }, onProgress));
}

/** `pronk merge`'s finisher: the options as a partial result holds them (the scan's x and y). */
export async function finishLateralScanMerge(_s: LateralScenario, options: unknown, rows: readonly unknown[]): Promise<LateralScanResult> {
  const { normalizeScanOptions } = await import('./scan.js');
  const { x, y } = normalizeScanOptions(options);
  return finishLateralScan(x, y, rows as LateralScanCell[]);
}
