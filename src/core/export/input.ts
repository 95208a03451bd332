// What `pronk export` reads: a scenario file (its policy) or a result file (format
// "pronk-result", format_version 1, kind "optimization" or "deadbeat"). Of a result file only
// these fields are read, each validated with a message naming it:
//
//   format, format_version, kind          the file's type
//   scenario                              the validated scenario the policy was made for (its body and start)
//   policy                                the policy to export (top level; it wins over scenario.policy)
//   constraints[]                         optional; each { name, value, limit, margin }, margin >= 0 feasible;
//                                         value and margin null together: not measured (optimize writes that
//                                         when no held-out stride completed; export refuses it, build.ts)
//   provenance                            { pronk_version, scenario_sha256, date }
//
// Result files written before `provenance` existed carry pronk_version, scenario_sha256 and
// `created` at the top level; those are read when `provenance` is absent.

import { z } from 'zod';
import { InputError, describeFound, formatPath, type InputIssue } from '../errors.js';
import { parseScenario, type Scenario } from '../scenario.js';
import { MODEL_KINDS, kindOf, requireKind } from '../models/kind.js';
import { contentHash } from '../version.js';
import type { Policy } from './sample.js';

export const RESULT_FORMAT = 'pronk-result';
export const RESULT_FORMAT_VERSION = 1;
export const RESULT_KINDS = ['optimization', 'deadbeat'] as const;

export type SourceKind = 'scenario' | (typeof RESULT_KINDS)[number];

export interface Constraint {
  name: string;
  /** The measured quantity; null when nothing was measured (no held-out stride completed). */
  value: number | null;
  limit: number;
  /** >= 0: the constraint holds; < 0: violated by this much; null with value. */
  margin: number | null;
}

export interface ExportSource {
  kind: SourceKind;
  /** The file read, as given. */
  file: string;
  /** The scenario with the exported policy in it (validated). */
  scenario: Scenario;
  policy: Policy;
  /** The result file's constraints; null when it has none (and for a scenario file). */
  constraints: Constraint[] | null;
  provenance: SourceProvenance;
}

export interface SourceProvenance {
  /** SHA-256 of the canonical JSON of the whole input file (version.ts canonicalJson). */
  result_sha256: string;
  /** The result file's scenario_sha256, or the scenario's own hash for a scenario file. */
  scenario_sha256: string;
  /** Whether scenario_sha256 is the hash of the scenario in the file (false: the file was edited). */
  scenario_sha256_matches: boolean;
  /** The Pronk version that wrote the result file; null for a scenario file. */
  source_pronk_version: string | null;
  /** When the result was made, as the file says; null for a scenario file. */
  source_date: string | null;
}

const finiteNumber = (what: string) => z.number({ error: `a finite number (${what})` });
const text = (what: string) => z.string({ error: what }).min(1, { error: what });
const sha256 = z.string({ error: 'a SHA-256 in hex (64 characters)' }).regex(/^[0-9a-f]{64}$/, { error: 'a SHA-256 in hex (64 characters)' });

// value and margin are null together when nothing was measured: pronk optimize writes that when
// the held-out rollouts complete no stride (objectives.ts), and pronk export refuses such a file
// by the constraint's name (build.ts); the file itself is a valid result.
const measured = (what: string) => z.number({ error: `a finite number (${what}), or null when nothing was measured` }).nullable();
const constraintSchema = z
  .object(
    {
      name: text('a non-empty string (the constraint name)'),
      value: measured('the constrained quantity'),
      limit: finiteNumber('the limit'),
      margin: measured('>= 0 when the constraint holds'),
    },
    { error: 'an object with name, value, limit, margin' },
  )
  .refine((c) => (c.value === null) === (c.margin === null), {
    path: ['margin'],
    error: 'null exactly when value is null (a constraint not measured has neither)',
  });

const provenanceSchema = z.object(
  {
    pronk_version: text('a non-empty string (the Pronk version that wrote the result)'),
    scenario_sha256: sha256,
    date: text('a non-empty string (when the result was made, ISO 8601)'),
  },
  { error: 'an object with pronk_version, scenario_sha256, date' },
);

export const resultSchema = z.object(
  {
    format: z.literal(RESULT_FORMAT, { error: `"${RESULT_FORMAT}" (a result file; a scenario file has no format field)` }),
    format_version: z.literal(RESULT_FORMAT_VERSION, { error: String(RESULT_FORMAT_VERSION) }),
    kind: z.enum(RESULT_KINDS, { error: `one of ${RESULT_KINDS.join(', ')}` }),
    // written since the result files said which model they describe; older files have none
    model: z.enum(MODEL_KINDS, { error: `one of the model kinds ${MODEL_KINDS.map((k) => `"${k}"`).join(', ')} (the scenario's kind)` }).optional(),
    // validated below with the scenario's own messages; here only present (z.unknown() would say
    // "Invalid input: expected nonoptional" for a missing one)
    scenario: z.custom<unknown>((v) => v !== undefined, { error: 'the scenario the policy was made for (an object with body, start, policy, ...)' }),
    policy: z.custom<unknown>((v) => v !== undefined, { error: 'the policy to export (an object with angle and stiffness)' }),
    constraints: z.array(constraintSchema, { error: 'an array of constraints { name, value, limit, margin }' }).optional(),
    provenance: provenanceSchema.optional(),
  },
  { error: 'a result object' },
);

// The older top-level provenance fields (see the file comment).
const legacyProvenanceSchema = z.object({
  pronk_version: text('a non-empty string (the Pronk version that wrote the result)'),
  scenario_sha256: sha256,
  created: text('a non-empty string (when the result was made)'),
});

function zodIssues(issues: readonly z.core.$ZodIssue[], root: unknown, prefix: PropertyKey[] = []): InputIssue[] {
  const seen = new Set<string>();
  const out: InputIssue[] = [];
  for (const issue of issues) {
    const segments = [...prefix, ...issue.path];
    const path = formatPath(segments);
    if (seen.has(path)) continue;
    seen.add(path);
    out.push({ path, expected: issue.message, found: describeFound(valueAt(root, segments)) });
  }
  return out;
}

function valueAt(root: unknown, path: readonly PropertyKey[]): unknown {
  let value = root;
  for (const segment of path) {
    if (typeof value !== 'object' || value === null || !Object.prototype.hasOwnProperty.call(value, segment)) return undefined;
    value = (value as Record<PropertyKey, unknown>)[segment];
  }
  return value;
}

function prefixed(error: unknown, prefix: string): InputIssue[] {
  if (!(error instanceof InputError)) throw error;
  return error.issues.map((issue) => ({ ...issue, path: issue.path === '' ? prefix : `${prefix}.${issue.path}`.replace('.[', '[') }));
}

/** True for a JSON value that claims to be a result file (it has a `format` field). */
export function looksLikeResult(value: unknown): boolean {
  return typeof value === 'object' && value !== null && !Array.isArray(value) && 'format' in value;
}

/** Validates a parsed result file; throws an InputError naming every bad field. */
export async function parseResult(value: unknown, file: string): Promise<ExportSource> {
  const parsed = resultSchema.safeParse(value);
  if (!parsed.success) throw new InputError(zodIssues(parsed.error.issues, value), { source: file });
  const result = parsed.data;
  const issues: InputIssue[] = [];

  let scenario: Scenario | undefined;
  try {
    scenario = parseScenario(result.scenario, { command: 'export', supported: ['slip', 'biped'] });
    requireKind(scenario, 'export', ['slip', 'biped']);
  } catch (error) {
    issues.push(...prefixed(error, 'scenario'));
  }
  if (scenario && result.model !== undefined && result.model !== kindOf(scenario)) {
    issues.push({ path: 'model', expected: `the kind of the result's scenario ("${kindOf(scenario)}")`, found: `"${result.model}"` });
  }
  let exported: Scenario | undefined;
  if (scenario) {
    try {
      exported = parseScenario({ ...scenario, policy: result.policy });
    } catch (error) {
      if (!(error instanceof InputError)) throw error;
      for (const issue of error.issues) {
        issues.push(issue.path === 'policy' || issue.path.startsWith('policy.') ? issue : { ...issue, path: `scenario.${issue.path}` });
      }
    }
  }

  let provenance: { pronk_version: string; scenario_sha256: string; date: string } | undefined = result.provenance;
  if (!provenance) {
    const legacy = legacyProvenanceSchema.safeParse(value);
    if (legacy.success) {
      provenance = { pronk_version: legacy.data.pronk_version, scenario_sha256: legacy.data.scenario_sha256, date: legacy.data.created };
    } else {
      issues.push({ path: 'provenance', expected: 'an object with pronk_version, scenario_sha256, date', found: 'missing' });
    }
  }
  if (issues.length) throw new InputError(issues, { source: file });

  const hashes = new Set([await contentHash(result.scenario), await contentHash(scenario)]);
  return {
    kind: result.kind,
    file,
    scenario: exported!,
    policy: exported!.policy,
    constraints: result.constraints ?? null,
    provenance: {
      result_sha256: await contentHash(value),
      scenario_sha256: provenance!.scenario_sha256,
      scenario_sha256_matches: hashes.has(provenance!.scenario_sha256),
      source_pronk_version: provenance!.pronk_version,
      source_date: provenance!.date,
    },
  };
}

/** A scenario file as an export source (its own policy, no constraints). */
export async function scenarioSource(value: unknown, file: string): Promise<ExportSource> {
  const scenario = parseScenario(value, { source: file, command: 'export', supported: ['slip', 'biped'] });
  requireKind(scenario, 'export', ['slip', 'biped'], file);
  const scenarioHash = await contentHash(scenario);
  return {
    kind: 'scenario',
    file,
    scenario,
    policy: scenario.policy,
    constraints: null,
    provenance: {
      result_sha256: await contentHash(value),
      scenario_sha256: scenarioHash,
      scenario_sha256_matches: true,
      source_pronk_version: null,
      source_date: null,
    },
  };
}

/** Reads RESULT or SCENARIO: a file with a `format` field is a result file, else a scenario. */
export async function readExportSource(file: string): Promise<ExportSource> {
  const { readInputFile } = await import('../input-file.js');
  const value = await readInputFile(file, 'result or scenario file');
  return looksLikeResult(value) ? parseResult(value, file) : scenarioSource(value, file);
}
