// What every `--json` output (and every result the library returns) says about itself, before
// its own fields: which output it is and in which version of its layout (`format`,
// `format_version`), and which model and section its numbers describe (`model`, `section`), so a
// script never has to guess what `apex_height_m` or a fixed point's state means.
//
//   format          "pronk-<command>": pronk-simulate, pronk-map, pronk-scan, pronk-basin,
//                   pronk-stepdown, pronk-robustness, pronk-deadbeat, pronk-export, pronk-recover. Files keep
//                   their own formats: pronk-result (optimize, deadbeat --out), pronk-partial
//                   (--shard), pronk-policy (export --format json).
//   format_version  1; raised only when a field is renamed or changes meaning (adding fields
//                   does not raise it).
//   model           the scenario's model kind: "slip", the spring-loaded inverted pendulum (a point
//                   mass on one massless spring leg; a scenario file without "model" is one), or
//                   "lateral", the lateral leg-spring model (a rigid body in the horizontal plane).
//   section         the Poincaré section its strides run between and its states are taken on:
//                   "flight_apex" for the single-leg runner (apex height and forward speed);
//                   "left_touchdown" for the lateral leg-spring model (speed, heading to the body
//                   axis, angular velocity at the left leg's touchdown).

import { jsonChunks } from './json-stream.js';

export const JSON_FORMAT_VERSION = 1;
export const MODEL_KIND = 'slip';
export const SECTION = 'flight_apex';

/** The section each model kind's strides run between ("lateral": the left leg's touchdown). */
export const SECTIONS = { slip: 'flight_apex', lateral: 'left_touchdown' } as const;
export type OutputModelKind = keyof typeof SECTIONS;

export type JsonCommand = 'simulate' | 'map' | 'scan' | 'basin' | 'stepdown' | 'robustness' | 'deadbeat' | 'export' | 'recover';

export interface JsonHeader {
  format: `pronk-${JsonCommand}`;
  format_version: typeof JSON_FORMAT_VERSION;
  model: OutputModelKind;
  section: (typeof SECTIONS)[OutputModelKind];
}

export type Described<T> = JsonHeader & T;

/** The result with its header first. */
export function described<T extends object>(command: JsonCommand, result: T, model: OutputModelKind = MODEL_KIND): Described<T> {
  return { format: `pronk-${command}`, format_version: JSON_FORMAT_VERSION, model, section: SECTIONS[model], ...result };
}

/** The `--json` text: the described result, 2-space indented, with a final newline. */
export function jsonText(command: JsonCommand, result: object, model: OutputModelKind = MODEL_KIND): string {
  return `${JSON.stringify(described(command, result, model), null, 2)}\n`;
}

/** The `--json` text of jsonText in pieces (src/core/json-stream.ts), for outputs too large for one string. */
export function* jsonTextChunks(command: JsonCommand, result: object): Generator<string> {
  yield* jsonChunks(described(command, result));
  yield '\n';
}
