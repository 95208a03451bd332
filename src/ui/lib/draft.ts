// Drafts: what the user has typed, as a JSON value that may be invalid. Fields are addressed by
// the same dotted paths the validators report (body.mass_kg, policy.angle.attack_deg[2]), so an
// InputError issue lands beside the field it names. Nothing here validates: parseScenario and
// parseStudy do, on the draft as it is.

import type { InputIssue } from '../../core/errors.js';

export type Segment = string | number;

/** `policy.angle.attack_deg[2]` → ['policy', 'angle', 'attack_deg', 2]. */
export function segments(path: string): Segment[] {
  const out: Segment[] = [];
  for (const match of path.matchAll(/([A-Za-z_$][\w$]*)|\[(\d+)\]/g)) out.push(match[1] !== undefined ? match[1] : Number(match[2]));
  return out;
}

export function joinPath(parts: readonly Segment[]): string {
  let path = '';
  for (const part of parts) path += typeof part === 'number' ? `[${part}]` : path === '' ? part : `.${part}`;
  return path;
}

export function getAt(root: unknown, path: string): unknown {
  let node = root;
  for (const s of segments(path)) {
    if (node === null || typeof node !== 'object' || !Object.hasOwn(node, s)) return undefined;
    node = (node as Record<Segment, unknown>)[s];
  }
  return node;
}

/** Sets the value at `path` (creating objects on the way); undefined removes the field. */
export function setAt(root: Record<string, unknown>, path: string, value: unknown): void {
  const parts = segments(path);
  let node = root as Record<Segment, unknown>;
  for (let i = 0; i < parts.length - 1; i++) {
    const next = node[parts[i]];
    if (next === null || typeof next !== 'object') node[parts[i]] = typeof parts[i + 1] === 'number' ? [] : {};
    node = node[parts[i]] as Record<Segment, unknown>;
  }
  const last = parts[parts.length - 1];
  if (value === undefined && !Array.isArray(node)) delete node[last];
  else node[last] = value;
}

const NUMBER_TEXT = /^[+-]?(\d+\.?\d*|\.\d+)(e[+-]?\d+)?$/i;

/**
 * The value a number field holds for what was typed: '' → undefined (the field is left out, so
 * a default applies or the validator says it is missing), a number → that number, anything else
 * → the text itself, which the validator then reports ("expected a number from 1e-6 to 1e6 (kg), found "9x"").
 */
export function numberFromText(text: string): number | string | undefined {
  const t = text.trim();
  if (t === '') return undefined;
  if (NUMBER_TEXT.test(t)) return Number(t);
  return text;
}

/** What a number field shows for a draft value. */
export function textFromValue(value: unknown): string {
  if (value === undefined || value === null) return '';
  if (typeof value === 'number') return Number.isFinite(value) ? String(value) : String(value);
  if (typeof value === 'string') return value;
  return JSON.stringify(value);
}

export function issueText(issue: InputIssue): string {
  return issue.message ?? `expected ${issue.expected}, found ${issue.found}`;
}

/** Issues keyed by path. A path is shown at most once per issue list. */
export function issuesByPath(issues: readonly InputIssue[]): Map<string, InputIssue[]> {
  const map = new Map<string, InputIssue[]>();
  for (const issue of issues) {
    const list = map.get(issue.path) ?? [];
    list.push(issue);
    map.set(issue.path, list);
  }
  return map;
}

/**
 * The issues no field on screen claims (e.g. an unknown field from an opened file): shown in the
 * editor's own list so that none is hidden.
 */
export function unclaimedIssues(issues: readonly InputIssue[], claimed: (path: string) => boolean): InputIssue[] {
  return issues.filter((issue) => !claimed(issue.path));
}

/** A plain deep copy (drafts are JSON). */
export function clone<T>(value: T): T {
  return value === undefined ? value : (JSON.parse(JSON.stringify(value)) as T);
}
