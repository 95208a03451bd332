// The margins of an optimization result as the workbench shows them: each limit by the label of
// its field in the Limits editor, the margin as a percentage of the limit (positive: inside), and
// the binding limit (the smallest percentage: the one the policy is closest to, or furthest past).

import { LIMIT_FIELDS } from './fields.js';

export interface MarginRow {
  name: string;
  label: string;
  unit: string;
  bound: 'upper' | 'lower';
  value: number | null;
  limit: number;
  margin: number | null;
  /** margin / |limit| × 100; null when nothing was measured. */
  percent: number | null;
  binding: boolean;
}

interface ConstraintLike {
  name: string;
  bound: 'upper' | 'lower';
  value: number | null;
  limit: number;
  margin: number | null;
  margin_percent?: number | null;
  binding?: boolean;
}

export function limitLabel(name: string): { label: string; unit: string } {
  const field = LIMIT_FIELDS.find((f) => f.path === `constraints.${name}`);
  return field ? { label: field.label, unit: field.unit } : { label: name.replaceAll('_', ' '), unit: '' };
}

export function marginRows(constraints: readonly ConstraintLike[]): MarginRow[] {
  const rows = constraints.map((c) => {
    const percent =
      typeof c.margin_percent === 'number' ? c.margin_percent : c.margin === null || c.limit === 0 ? null : (100 * c.margin) / Math.abs(c.limit);
    return { name: c.name, ...limitLabel(c.name), bound: c.bound, value: c.value, limit: c.limit, margin: c.margin, percent, binding: false };
  });
  // the result marks the binding limit itself; an older file's is found the same way: the smallest percentage
  const marked = constraints.findIndex((c) => c.binding === true);
  let binding: MarginRow | undefined = marked >= 0 ? rows[marked] : undefined;
  if (!binding) for (const r of rows) if (r.percent !== null && (!binding || r.percent < (binding.percent as number))) binding = r;
  if (binding) binding.binding = true;
  return rows;
}
