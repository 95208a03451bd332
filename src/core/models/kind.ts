// The scenario's model kind: the top-level "model" field. Absent or "slip" is the single-leg
// spring-loaded inverted pendulum (every earlier file, read and run exactly as before); each other
// kind has its own module beside this one with its schema, defaults and model block.

import { InputError, closestName, describeFound } from '../errors.js';

export const MODEL_KINDS = [
  'slip',
  'lateral', // the lateral leg-spring model (models/lateral.ts)
] as const;

export type ModelKind = (typeof MODEL_KINDS)[number];

/** The commands that run each kind other than "slip" (which runs in all), for refusals. */
export const KIND_COMMANDS: Partial<Record<ModelKind, readonly string[]>> = {
  lateral: ['simulate', 'map', 'recover'],
};

/** The kind a raw scenario value names; an InputError on "model" for anything else. */
export function modelKindOf(raw: unknown, options: { source?: string } = {}): ModelKind {
  if (typeof raw !== 'object' || raw === null || Array.isArray(raw)) return 'slip';
  if (!Object.prototype.hasOwnProperty.call(raw, 'model')) return 'slip';
  const model = (raw as Record<string, unknown>).model;
  if (typeof model === 'string' && (MODEL_KINDS as readonly string[]).includes(model)) return model as ModelKind;
  const suggestion = typeof model === 'string' ? closestName(model, MODEL_KINDS) : undefined;
  const found = describeFound(model);
  throw new InputError(
    [
      {
        path: 'model',
        expected: `one of ${MODEL_KINDS.map((k) => JSON.stringify(k)).join(', ')} (absent means "slip")`,
        found: suggestion ? `${found} (did you mean ${suggestion}?)` : found,
      },
    ],
    options,
  );
}

/**
 * The refusal of a command that does not run a kind: exit 2 with
 * `scenario model "lateral": stepdown supports "slip", found "lateral"`.
 */
export function refuseModelKind(command: string, supported: readonly ModelKind[], found: ModelKind, source?: string): never {
  const list = supported.map((k) => JSON.stringify(k)).join(' and ');
  throw new InputError(
    [
      {
        path: '',
        expected: `a scenario of model ${list}`,
        found: JSON.stringify(found),
        message:
          `scenario model ${JSON.stringify(found)}: ${command} supports ${list}, found ${JSON.stringify(found)}` +
          (KIND_COMMANDS[found] ? ` (a ${JSON.stringify(found)} scenario runs in pronk ${KIND_COMMANDS[found]?.join(', ')})` : ''),
      },
    ],
    { source },
  );
}
