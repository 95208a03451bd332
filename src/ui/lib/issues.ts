// The validators' issues as the editors show them: named by the labels on screen (not by JSON
// paths), and an error that involves two fields (a clamp whose lowest angle is above its steepest,
// a free parameter's lower bound above its upper, an inverted limit range) marked on BOTH fields,
// each saying what the other holds. The validators report such an error once, on the second field;
// the partner is found here from the pair's paths.

import type { InputIssue } from '../../core/errors.js';
import { parameterName } from '../../core/figures/labels.js';
import { getAt, issueText } from './draft.js';
import { LIMIT_FIELDS, MISMATCH_FIELDS, SEARCH_FIELDS, TERM_KINDS } from './fields.js';

export interface FieldIssue extends InputIssue {
  /** The field's label on screen. */
  label: string;
  /** Set on an issue added beside the partner field of a two-field error: not listed again in the summary. */
  partnerOf?: string;
  /** For a two-field error: both fields, lower first (the summary's link goes to the first). */
  fields?: [string, string];
}

interface Pair {
  /** Matches the path the validator reports (the upper field). */
  upper: RegExp;
  /** The lower field's path from the upper one. */
  lower: (path: string) => string;
  /** Recognises the ordering message among the upper field's other issues (range, type). */
  ordering: RegExp;
  unit: (path: string) => string;
}

const PAIRS: Record<'sc' | 'st', Pair[]> = {
  sc: [{ upper: /^policy\.angle\.max_deg$/, lower: () => 'policy.angle.min_deg', ordering: /> min_deg/, unit: () => '°' }],
  st: [
    { upper: /^free_parameters\[\d+\]\.upper$/, lower: (p) => p.replace(/upper$/, 'lower'), ordering: /> lower/, unit: () => '' },
    { upper: /^constraints\.leg_angle_range_deg\.max_deg$/, lower: () => 'constraints.leg_angle_range_deg.min_deg', ordering: /> min_deg/, unit: () => '°' },
    {
      upper: /^constraints\.stiffness_range_N_per_m\.max_N_per_m$/,
      lower: () => 'constraints.stiffness_range_N_per_m.min_N_per_m',
      ordering: /> min_N_per_m/,
      unit: () => ' N/m',
    },
  ],
};

const KIND_LABELS: Record<string, string> = {
  'policy.angle': 'Touchdown angle',
  'policy.angle.kind': 'Touchdown angle',
  'policy.stiffness': 'Stiffness schedule',
  'policy.stiffness.kind': 'Stiffness schedule',
  terrain: 'Ground',
  'terrain.kind': 'Ground',
  name: 'Name',
  description: 'Description',
  body: 'Body',
  start: 'Start',
  policy: 'Policy',
  integrator: 'Integrator',
  model: 'Model',
  legs: 'Legs',
  'legs.left': 'Left leg',
  'legs.right': 'Right leg',
  'start.gait': 'Start gait',
  'start.leg': 'Start leg',
};

function scenarioLabel(path: string): string {
  if (path === '') return 'the scenario';
  if (KIND_LABELS[path]) return KIND_LABELS[path];
  const name = parameterName(path);
  return name.label;
}

const STUDY_FIELDS = new Map([...LIMIT_FIELDS, ...SEARCH_FIELDS, ...MISMATCH_FIELDS].map((f) => [f.path, f.label]));
const STUDY_WORDS: Record<string, string> = {
  '': 'the study',
  constraints: 'Limits',
  'constraints.leg_angle_range_deg': 'Touchdown angle range',
  'constraints.stiffness_range_N_per_m': 'Actuator stiffness range',
  free_parameters: 'Free parameters',
  objective: 'Objective',
  'objective.terms': 'Objective terms',
  search: 'Search',
  'search.method': 'Method',
  'search.local_method': 'Local method',
  'search.constraint_handling': 'Limits enforced by',
  holdout: 'Held-out scoring',
  model_mismatch: 'Model mismatch',
  'model_mismatch.distribution': 'Mismatch distribution',
};
const BOUND_WORDS: Record<string, string> = { path: 'parameter', lower: 'lower bound', upper: 'upper bound', start: 'start' };

function studyLabel(path: string, study: unknown): string {
  if (STUDY_FIELDS.has(path)) return STUDY_FIELDS.get(path)!;
  if (path in STUDY_WORDS) return STUDY_WORDS[path];
  const free = /^free_parameters\[(\d+)\](?:\.(\w+))?$/.exec(path);
  if (free) {
    const i = Number(free[1]);
    const target = getAt(study, `free_parameters[${i}].path`);
    const name = typeof target === 'string' ? parameterName(target).label : '';
    return `Free parameter ${i + 1}${name && name !== target ? ` (${name})` : ''}${free[2] ? `: ${BOUND_WORDS[free[2]] ?? free[2]}` : ''}`;
  }
  const term = /^objective\.terms\[(\d+)\](?:\.(.+))?$/.exec(path);
  if (term) {
    const i = Number(term[1]);
    const kind = getAt(study, `objective.terms[${i}].kind`);
    const def = TERM_KINDS.find((k) => k.kind === kind);
    const field = term[2] ? (def?.fields.find((f) => f.path === term[2])?.label ?? term[2].replaceAll('_', ' ')) : '';
    return `Term ${i + 1}${def ? ` (${def.label})` : ''}${field ? `: ${field}` : ''}`;
  }
  return path;
}

/** The label on screen of a field of the scenario (scope sc) or the study (st). */
export function fieldLabel(scope: 'sc' | 'st', path: string, study?: unknown): string {
  return scope === 'sc' ? scenarioLabel(path) : studyLabel(path, study);
}

const show = (v: unknown) => (typeof v === 'number' ? String(v) : JSON.stringify(v));

/**
 * The issues of one draft as the editors show them: labelled, and every two-field error on both
 * fields (the second one added with `partnerOf`).
 */
export function explainIssues(scope: 'sc' | 'st', issues: readonly InputIssue[], draft: unknown): FieldIssue[] {
  const out: FieldIssue[] = [];
  for (const issue of issues) {
    const pair = PAIRS[scope].find((p) => p.upper.test(issue.path) && p.ordering.test(issue.expected ?? ''));
    if (!pair) {
      out.push({ ...issue, label: fieldLabel(scope, issue.path, draft) });
      continue;
    }
    const lowerPath = pair.lower(issue.path);
    const upperLabel = fieldLabel(scope, issue.path, draft);
    const lowerLabel = fieldLabel(scope, lowerPath, draft);
    const unit = pair.unit(issue.path);
    const lo = getAt(draft, lowerPath);
    const hi = getAt(draft, issue.path);
    out.push({
      ...issue,
      label: `${lowerLabel} and ${upperLabel}`,
      fields: [lowerPath, issue.path],
      message: `must be above ${lowerLabel} (${show(lo)}${unit}); found ${show(hi)}${unit}`,
    });
    out.push({
      path: lowerPath,
      expected: `a value below ${upperLabel} (${show(hi)}${unit})`,
      found: show(lo),
      label: lowerLabel,
      partnerOf: issue.path,
      message: `must be below ${upperLabel} (${show(hi)}${unit}); found ${show(lo)}${unit}`,
    });
  }
  return out;
}

/** The summary line of an issue: a two-field error says both values. */
export function summaryText(issue: FieldIssue, draft: unknown): string {
  if (issue.fields) {
    const [lower, upper] = issue.fields;
    return `${show(getAt(draft, lower))} is not below ${show(getAt(draft, upper))}: the lower must be less than the upper`;
  }
  return issueText(issue);
}
