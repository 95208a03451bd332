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

export function lateralScan(
  engine: Engine,
  s: LateralScenario,
  x: ScanAxis,
  y: ScanAxis,
  onProgress?: (done: number, total: number) => void,
): LateralScanResult {
  // the paths name numeric fields of the (defaults-filled) lateral scenario
  const xs = checkAxisPath(s as unknown as Scenario, x, '--x');
  const ys = checkAxisPath(s as unknown as Scenario, y, '--y');
  const xv = axisValues(x);
  const yv = axisValues(y);
  const cells: LateralScanCell[] = [];
  const counts: Record<LateralScanClass, number> = { none: 0, unstable: 0, neutral: 0, stable: 0 };
  const total = xv.length * yv.length;
  for (const vy of yv) {
    for (const vx of xv) {
      const raw = structuredClone(s) as unknown as Record<string, unknown>;
      setAt(raw, xs, vx);
      setAt(raw, ys, vy);
      let cell: LateralScenario;
      try {
        cell = parseLateralScenario(raw);
      } catch (error) {
        if (!(error instanceof InputError)) throw error;
        throw new InputError(
          error.issues.map((i) => ({ ...i, path: `cell ${x.path} = ${vx}, ${y.path} = ${vy}: ${i.path}` })),
        );
      }
      const map = lateralFixedPoints(engine, cell, { headingStarts: 24, rateStarts: 3 });
      const rank = { stable: 3, neutral: 2, unstable: 1 } as const;
      const best = [...map.fixed_points].sort(
        (a, b) => rank[b.stability] - rank[a.stability] || Math.max(...a.reduced_eigenvalues.map((z) => z.modulus)) - Math.max(...b.reduced_eigenvalues.map((z) => z.modulus)),
      )[0];
      const cls: LateralScanClass = best ? best.stability : 'none';
      counts[cls]++;
      cells.push({
        x: vx,
        y: vy,
        class: cls,
        gaits: map.fixed_points.length,
        speed_m_per_s: best ? best.speed_m_per_s : null,
        heading_to_body_deg: best ? best.heading_to_body_deg : null,
        largest_modulus: best ? Math.max(...best.reduced_eigenvalues.map((z) => z.modulus)) : null,
      });
      onProgress?.(cells.length, total);
    }
  }
  return { x: { path: x.path, values: xv }, y: { path: y.path, values: yv }, cells, counts };
}
