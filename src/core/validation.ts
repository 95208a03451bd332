// zod schemas → InputErrors that a person can act on: one issue per field, naming the field path,
// what was expected and what was found, with a "did you mean" for unknown fields and misspelt
// kinds. Shared by the scenario and study validators.

import type { z } from 'zod';
import { closestName, describeFound, formatPath, type InputIssue } from './errors.js';

type KnownFields = Map<string, { known: string[]; present: string[] }>;

/** safeParse with every problem as an InputIssue (empty when the value is valid). */
export function validateWith<S extends z.ZodType>(
  schema: S,
  value: unknown,
): { success: true; data: z.output<S>; issues: [] } | { success: false; data: undefined; issues: InputIssue[] } {
  const knownFields: KnownFields = new Map();
  const result = schema.safeParse(value, {
    error: (issue) => {
      // Remember, per object, which fields it allows, to suggest one for each unknown key.
      if (issue.code === 'unrecognized_keys') {
        const shape = (issue.inst as unknown as { shape?: object } | undefined)?.shape;
        const input = issue.input;
        knownFields.set(formatPath(issue.path ?? []), {
          known: shape ? Object.keys(shape) : [],
          present: typeof input === 'object' && input !== null ? Object.keys(input) : [],
        });
      }
      return undefined;
    },
  });
  if (result.success) return { success: true, data: result.data, issues: [] };
  return { success: false, data: undefined, issues: toInputIssues(result.error.issues, value, knownFields) };
}

function toInputIssues(zodIssues: readonly z.core.$ZodIssue[], root: unknown, knownFields: KnownFields): InputIssue[] {
  const issues: InputIssue[] = [];
  const seen = new Set<string>();
  // one message per field: the first problem found there
  const add = (issue: InputIssue) => {
    if (seen.has(issue.path)) return;
    seen.add(issue.path);
    issues.push(issue);
  };
  for (const zodIssue of zodIssues) {
    const path = formatPath(zodIssue.path);
    const value = valueAt(root, zodIssue.path);
    const found = describeFound(value);
    switch (zodIssue.code) {
      case 'unrecognized_keys': {
        const fields = knownFields.get(path) ?? { known: [], present: [] };
        const candidates = fields.known.filter((name) => !fields.present.includes(name));
        for (const key of zodIssue.keys) {
          const suggestion = closestName(key, candidates);
          add({
            path: formatPath([...zodIssue.path, key]),
            expected: fields.known.length ? `one of the fields ${fields.known.join(', ')}` : 'no such field',
            found: `unknown field ${JSON.stringify(key)}`,
            message: suggestion ? `unknown field (did you mean ${suggestion}?)` : 'unknown field',
          });
        }
        break;
      }
      case 'invalid_union': {
        // a discriminated union's tag: the path already ends in the tag's name
        const options = ((zodIssue as { options?: unknown[] }).options ?? []).map(String);
        const suggestion = typeof value === 'string' ? closestName(value, options) : undefined;
        add({ path, expected: `one of ${options.join(', ')}`, found: suggestion ? `${found} (did you mean ${suggestion}?)` : found });
        break;
      }
      case 'invalid_value': {
        const options = ((zodIssue as { values?: unknown[] }).values ?? []).map(String);
        const suggestion = typeof value === 'string' ? closestName(value, options) : undefined;
        add({ path, expected: zodIssue.message, found: suggestion ? `${found} (did you mean ${suggestion}?)` : found });
        break;
      }
      default: {
        const params = (zodIssue as { params?: { found?: string } }).params;
        // an over-long array: its length says more than its first entries
        const tooLong = zodIssue.code === 'too_big' && Array.isArray(value) ? `${value.length} entries` : undefined;
        add({ path, expected: zodIssue.message, found: params?.found ?? tooLong ?? found });
      }
    }
  }
  return issues;
}

/** The value at a zod issue path, or undefined where the path leaves the value. */
export function valueAt(root: unknown, path: readonly PropertyKey[]): unknown {
  let value = root;
  for (const segment of path) {
    if (typeof value !== 'object' || value === null) return undefined;
    if (!Object.prototype.hasOwnProperty.call(value, segment)) return undefined;
    value = (value as Record<PropertyKey, unknown>)[segment];
  }
  return value;
}
