// The study follows the scenario's model kind. Each kind's search has its own objective terms,
// limits and free parameters (core/optimize/kinds.ts); a study written for another kind is fitted
// to the scenario's: what the kind has not is dropped (each named, for the question or the notice
// that says so), and what would leave the study without terms or free parameters is filled from
// the kind's demo study. The limits editor lists only the limits the kind has.

import demoBipedStudyJson from '../../../scenarios/demo-biped-study.json' with { type: 'json' };
import demoHexapodStudyJson from '../../../scenarios/demo-hexapod-study.json' with { type: 'json' };
import demoStudyJson from '../../../scenarios/demo-study.json' with { type: 'json' };
import { supportedLimits, supportedTerms } from '../../core/optimize/kinds.js';
import { parameterName } from '../../core/figures/labels.js';
import { clone, getAt } from './draft.js';
import { LIMIT_FIELDS, searchablePaths, TERM_KINDS, type FieldDef, type KindDef } from './fields.js';
import { draftKind, KIND_NAMES, type DraftKind } from './kinds.js';

type Json = Record<string, unknown>;

const DEMO_STUDIES: Record<DraftKind, unknown> = { slip: demoStudyJson, biped: demoBipedStudyJson, lateral: demoHexapodStudyJson };

/** The kind's demo study as the workbench edits it (the scenario is the editor's, not a file). */
export function demoStudyOf(kind: DraftKind): Json {
  const { scenario_file: _file, ...study } = clone(DEMO_STUDIES[kind]) as Json;
  return study;
}

/** A limit's name in the study's constraints (constraints.leg_angle_range_deg.min_deg → leg_angle_range_deg). */
export const limitName = (path: string) => path.split('.')[1];

/** The limit fields the editor shows for a kind: the kind's own, and any other the draft sets (marked by the validator, to be cleared). */
export function limitFieldsOf(kind: DraftKind, study: unknown): FieldDef[] {
  const own = supportedLimits(kind);
  return LIMIT_FIELDS.filter((f) => own.includes(limitName(f.path)) || getAt(study, f.path) !== undefined);
}

/** The objective terms a kind's search has, as the editor offers them. */
export function termKindsOf(kind: DraftKind): KindDef[] {
  const own = supportedTerms(kind);
  return TERM_KINDS.filter((t) => own.includes(t.kind));
}

/** What of a study a kind's search has not: limits by name, terms and free parameters by index, the model mismatch. */
export interface StudyMisfit {
  limits: string[];
  terms: number[];
  parameters: number[];
  mismatch: boolean;
}

/** The parts of `study` that the search of `scenario`'s kind cannot run. */
export function studyMisfit(study: Json, scenario: unknown): StudyMisfit {
  const kind = draftKind(scenario);
  const limits = supportedLimits(kind);
  const terms = supportedTerms(kind);
  const paths = new Set(searchablePaths(scenario));
  const constraints = study.constraints !== null && typeof study.constraints === 'object' ? (study.constraints as Json) : {};
  const list = (value: unknown) => (Array.isArray(value) ? (value as Json[]) : []);
  return {
    limits: Object.keys(constraints).filter((name) => constraints[name] !== undefined && !limits.includes(name)),
    terms: list(getAt(study, 'objective.terms')).flatMap((t, i) => (typeof t?.kind === 'string' && !terms.includes(t.kind) ? [i] : [])),
    parameters: list(study.free_parameters).flatMap((p, i) => (typeof p?.path === 'string' && !paths.has(p.path) ? [i] : [])),
    // the lateral search draws no robots (core/optimize/kinds.ts): a model mismatch would be ignored
    mismatch: kind === 'lateral' && study.model_mismatch !== undefined && study.model_mismatch !== null,
  };
}

export const fits = (m: StudyMisfit) => m.limits.length + m.terms.length + m.parameters.length === 0 && !m.mismatch;

const LIMIT_LABELS: Record<string, string> = {
  friction_coefficient: 'the friction limit',
  max_vertical_force_N: 'the limit on both legs\' vertical force',
  leg_angle_range_deg: 'the touchdown angle range',
  max_hip_rate_deg_per_s: 'the hip rate limit',
  stiffness_range_N_per_m: 'the actuator stiffness range',
  max_leg_force_N: 'the leg force limit',
  max_compression_fraction: 'the compression limit',
};

const TERM_LABELS: Record<string, string> = {
  survival: 'survival on rough ground',
  tracking: 'apex tracking',
  basin: 'basin of attraction',
  step_down: 'step-down tolerance',
  recovery: 'kick recovery',
};

/** A fitted study and what the fit did, in words. */
export interface FittedStudy {
  study: Json;
  /** What was dropped ("the friction limit", "term 3 (step-down tolerance)", "free parameter 2 (Attack angle)"). */
  dropped: string[];
  /** What was added from the kind's demo study ("the terms of the two-leg demo study"). */
  added: string[];
  /** Kept free parameters whose bounds were moved to hold the new scenario's value. */
  moved: string[];
}

/**
 * `study` fitted to `scenario`'s kind: the limits, terms and free parameters the kind has not are
 * dropped; no term left: the kind's demo study's terms; no free parameter left: the demo study's
 * that the scenario has (bounds moved to hold the scenario's value when they do not), else one of
 * the scenario's numbers ±20 %. The search settings, seeds and the rest are kept.
 */
export function fitStudy(study: Json, scenario: unknown): FittedStudy {
  const kind = draftKind(scenario);
  const misfit = studyMisfit(study, scenario);
  const out = clone(study);
  const dropped: string[] = [];
  const added: string[] = [];
  const moved: string[] = [];
  // a study that fits is left alone (a bound the user set past the scenario's value is the validator's to report)
  if (fits(misfit)) return { study: out, dropped, added, moved };
  const demo = demoStudyOf(kind);
  if (misfit.limits.length) {
    const constraints = { ...(out.constraints as Json) };
    for (const name of misfit.limits) {
      delete constraints[name];
      dropped.push(LIMIT_LABELS[name] ?? name);
    }
    out.constraints = constraints;
  }
  const terms = (Array.isArray(getAt(out, 'objective.terms')) ? getAt(out, 'objective.terms') : []) as Json[];
  if (misfit.terms.length || terms.length === 0) {
    const bad = new Set(misfit.terms);
    for (const i of misfit.terms) dropped.push(`term ${i + 1} (${TERM_LABELS[String(terms[i].kind)] ?? String(terms[i].kind)})`);
    let kept = terms.filter((_, i) => !bad.has(i));
    if (kept.length === 0) {
      kept = getAt(demo, 'objective.terms') as Json[];
      added.push(`the objective of the ${KIND_NAMES[kind]} demo study (${kept.map((t) => TERM_LABELS[String(t.kind)]).join(', ')})`);
    }
    out.objective = { ...(out.objective as Json), terms: kept };
  }
  const free = (Array.isArray(out.free_parameters) ? out.free_parameters : []) as Json[];
  if (misfit.parameters.length || free.length === 0) {
    const bad = new Set(misfit.parameters);
    for (const i of misfit.parameters) dropped.push(`free parameter ${i + 1} (${parameterName(String(free[i].path)).label})`);
    let kept = free.filter((_, i) => !bad.has(i));
    if (kept.length === 0) {
      const paths = searchablePaths(scenario);
      kept = (demo.free_parameters as Json[]).filter((p) => paths.includes(String(p.path))).map((p) => holdingValue(p, getAt(scenario, String(p.path))));
      if (kept.length === 0 && paths.length > 0) kept = [holdingValue({ path: paths[0], lower: 0, upper: 0 }, getAt(scenario, paths[0]))];
      if (kept.length) added.push(`free parameter${kept.length === 1 ? '' : 's'} ${kept.map((p) => parameterName(String(p.path)).label).join(', ')}`);
    }
    out.free_parameters = kept;
  }
  // a kept parameter whose scenario value the bounds no longer hold (the kinds' numbers differ in scale)
  out.free_parameters = ((out.free_parameters ?? []) as Json[]).map((p) => {
    if (p.start !== undefined) return p;
    const fitted = holdingValue(p, getAt(scenario, String(p.path)));
    if (fitted.lower !== p.lower || fitted.upper !== p.upper) moved.push(`free parameter ${parameterName(String(p.path)).label} to ${fitted.lower} to ${fitted.upper}`);
    return fitted;
  });
  if (misfit.mismatch) {
    delete out.model_mismatch;
    dropped.push('the model mismatch');
  }
  return { study: out, dropped, added, moved };
}

/** A free parameter whose bounds hold the scenario's `value` (as given when they do, else ±20 % of it). */
function holdingValue(p: Json, value: unknown): Json {
  const v = typeof value === 'number' ? value : 1;
  const { start: _start, ...rest } = p;
  if (typeof p.lower === 'number' && typeof p.upper === 'number' && p.lower <= v && v <= p.upper) return rest;
  const span = Math.abs(v) * 0.2 || 1;
  return { ...rest, lower: Number((v - span).toPrecision(4)), upper: Number((v + span).toPrecision(4)) };
}

/** The fit's changes in one sentence ("drops the friction limit and term 3 (step-down tolerance); adds ..."). */
export function fitText(fit: FittedStudy): string {
  const words = (list: string[]) => (list.length <= 1 ? list.join('') : `${list.slice(0, -1).join(', ')} and ${list.at(-1)}`);
  const parts = [];
  if (fit.dropped.length) parts.push(`drops ${words(fit.dropped)}`);
  if (fit.added.length) parts.push(`adds ${words(fit.added)}`);
  if (fit.moved.length) parts.push(`moves the bounds of ${words(fit.moved)}`);
  return parts.join('; ');
}
