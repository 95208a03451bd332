// JSON Schemas (draft 2020-12) of the files Pronk reads, generated from the validators' own zod
// schemas, so that an editor can check and complete a scenario, study or result file as it is
// typed (the file names its schema in "$schema"). `npm run build` writes them to schemas/.
//
// A JSON Schema says what each field must be on its own; the validators also check what involves
// several fields (a table's columns against its knot times, the start apex above the first
// touchdown, a free parameter's path into the scenario, the hold-out seed against the training
// seed). A file the schema accepts can still be refused by `pronk`, always with a message naming
// the field; a file the schema refuses is always refused by `pronk` too.

import { z } from 'zod';
import { policySchema, scenarioSchema } from './scenario.js';
import { bipedScenarioSchema } from './models/biped.js';
import { lateralPolicySchema, lateralScenarioSchema } from './models/lateral.js';
import { studySchema } from './optimize/study.js';
import { bipedSchema } from './models/biped.js';
import { resultSchema } from './export/input.js';

export const JSON_SCHEMA_NAMES = ['scenario', 'study', 'result'] as const;
export type JsonSchemaName = (typeof JSON_SCHEMA_NAMES)[number];

/** Where each schema is written in the package, relative to its root. */
export const jsonSchemaFile = (name: JsonSchemaName): string => `schemas/${name}.schema.json`;

const TITLES: Record<JsonSchemaName, { title: string; description: string }> = {
  scenario: {
    title: 'Pronk scenario',
    description:
      'A spring-mass runner (body, start apex, touchdown-angle and stiffness policy, terrain, stride count) for pronk, on one spring leg or ("model": "biped") two. SI units, the unit in every field name; angles in degrees, the attack angle from the horizontal.',
  },
  study: {
    title: 'Pronk study',
    description:
      'A policy search for pronk optimize: a base scenario (inline or scenario_file), free parameters with bounds, a weighted objective, machine limits, model mismatch, search settings, training and held-out seeds.',
  },
  result: {
    title: 'Pronk result',
    description:
      'A result file written by pronk optimize --out or pronk deadbeat --out. The fields listed are those pronk export reads; the writers add scores, traces and more.',
  },
};

// The validators' "expected" text of a field (each zod schema carries one, with its unit), used as
// the field's description: an editor shows it on hover.
function expectedText(schema: unknown): string | undefined {
  const error = (schema as { _zod?: { def?: { error?: unknown } } })._zod?.def?.error;
  if (typeof error !== 'function') return undefined;
  try {
    const text = error({ code: 'invalid_type', input: undefined, path: [] });
    return typeof text === 'string' ? text : undefined;
  } catch {
    return undefined;
  }
}

function zodSchemaOf(name: JsonSchemaName): z.ZodType {
  switch (name) {
    case 'scenario':
      return scenarioSchema;
    case 'study':
      // the inline base scenario is a scenario (the validator reads it as one, after the rest)
      return studySchema.extend({ scenario: z.union([scenarioSchema, bipedScenarioSchema(), lateralScenarioSchema]).optional() });
    case 'result':
      // a result's scenario is of any model kind the result's `model` names (single-leg or two-leg)
      return resultSchema.extend({
        $schema: z.string().optional(),
        scenario: z.union([scenarioSchema, bipedScenarioSchema(), lateralScenarioSchema]),
        policy: z.union([policySchema, lateralPolicySchema]),
      });
  }
}

/** The JSON Schema of one kind of file, as plain JSON. */
export function jsonSchema(name: JsonSchemaName): Record<string, unknown> {
  const generated = generate(zodSchemaOf(name));
  if (name === 'scenario') addModelKinds(generated);
  const { $schema, description: _expected, ...rest } = generated;
  return { $schema, ...TITLES[name], ...rest };
}

type Node = Record<string, unknown> & { properties?: Record<string, Node> };

// The scenario schema describes every model kind's fields (src/core/models/): "model", and the
// two-leg model's "legs" and start fields are added as optional properties, so an editor accepts
// and completes either kind; which fields a kind needs together the validator checks.
function addModelKinds(scenario: Node): void {
  const biped = generate(bipedSchema()) as Node;
  const props = scenario.properties!;
  const bipedProps = biped.properties!;
  props.model = {
    enum: ['slip', 'biped'],
    description: 'the model kind: "slip" (one spring leg, the default when absent) or "biped" (two spring legs)',
  };
  props.legs = bipedProps.legs;
  const start = props.start.properties!;
  for (const field of ['gait', 'offset_m', 'leg']) start[field] = bipedProps.start.properties![field];
}

function generate(schema: z.ZodType): Record<string, unknown> {
  return z.toJSONSchema(schema, {
    target: 'draft-2020-12',
    io: 'input', // what a file may hold: fields with defaults are optional
    unrepresentable: 'any',
    override: ({ zodSchema, jsonSchema: node }) => {
      if (node.description === undefined) {
        const text = expectedText(zodSchema);
        if (text) node.description = text;
      }
    },
  }) as Record<string, unknown>;
}

/** The file's text: 2-space JSON with a final newline. */
export function jsonSchemaText(name: JsonSchemaName): string {
  return `${JSON.stringify(jsonSchema(name), null, 2)}\n`;
}
