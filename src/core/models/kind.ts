// Model kinds: which equations, events and section a scenario runs on. A scenario file's optional
// top-level "model" selects one: absent or "slip" is the single-leg model (the file and every
// output exactly as before "model" existed), "biped" the two-leg model (models/biped.ts), "lateral"
// the lateral leg-spring model (models/lateral.ts, its own scenario type and kernel). Each kind
// keeps its schema, defaults, messages and model-block builder in its own module; this file only
// dispatches. A command that does not (yet) run a kind refuses it here, by name.

import { InputError, closestName, describeFound } from '../errors.js';

export type ModelKind = 'slip' | 'biped' | 'lateral';
/** Every kind this build accepts, in the order messages list them. */
export const MODEL_KINDS: readonly ModelKind[] = ['slip', 'biped', 'lateral'];


/** The Poincaré section a kind's strides run between (the `--json` header's "section"). */
export type SectionName = 'flight_apex' | 'single_support_apex' | 'left_touchdown';

function listKinds(kinds: readonly string[]): string {
  const quoted = kinds.map((k) => `"${k}"`);
  return quoted.length <= 1 ? quoted.join('') : `${quoted.slice(0, -1).join(', ')} or ${quoted[quoted.length - 1]}`;
}

/** The kind a raw (not yet validated) scenario value asks for; a bad "model" is an InputError. */
export function modelKindOf(raw: unknown, source?: string): ModelKind {
  if (typeof raw !== 'object' || raw === null || Array.isArray(raw)) return 'slip';
  const model = (raw as Record<string, unknown>).model;
  if (model === undefined) return 'slip';
  if (typeof model === 'string' && (MODEL_KINDS as readonly string[]).includes(model)) return model as ModelKind;
  const suggestion = typeof model === 'string' ? closestName(model, MODEL_KINDS) : undefined;
  const found = describeFound(model);
  throw new InputError(
    [
      {
        path: 'model',
        expected: `one of the model kinds ${listKinds(MODEL_KINDS)} (absent: "slip")`,
        found: suggestion ? `${found} (did you mean ${suggestion}?)` : found,
      },
    ],
    { source },
  );
}

/** The kind of a validated scenario. */
export function kindOf(scenario: { model?: string }): ModelKind {
  return scenario.model === 'biped' ? 'biped' : 'slip';
}

/**
 * Refuse a scenario whose kind `command` does not run: exit 2 with e.g.
 * `scenario model "biped": stepdown supports "slip", found "biped"`.
 */
export function requireKind(scenario: { model?: string }, command: string, supported: readonly ModelKind[], source?: string): void {
  const kind = kindOf(scenario);
  if (supported.includes(kind)) return;
  const list = supported.map((k) => `"${k}"`).join(' and ');
  throw new InputError(
    [
      {
        path: 'model',
        expected: `a model kind ${command} supports (${list})`,
        found: `"${kind}"`,
        message: `scenario model "${kind}": ${command} supports ${list}, found "${kind}"`,
      },
    ],
    { source },
  );
}

/**
 * Refuse a raw scenario of a kind `command` does not run, before validating it: exit 2 with e.g.
 * `scenario model "lateral": stepdown supports "slip" and "biped", found "lateral" (a "lateral"
 * scenario runs in pronk simulate, map, recover)`.
 */
export function refuseModelKind(command: string, supported: readonly ModelKind[], found: ModelKind, source?: string): never {
  const list = supported.map((k) => `"${k}"`).join(' and ');
  throw new InputError(
    [
      {
        path: 'model',
        expected: `a model kind ${command} supports (${list})`,
        found: `"${found}"`,
        // the CLI appends the commands that do run the kind (withKindHint in cli/scenario-argument.ts)
        message: `scenario model "${found}": ${command} supports ${list}, found "${found}"`,
      },
    ],
    { source },
  );
}
