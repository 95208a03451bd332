// What every `--json` output (and every result the library returns) says about itself, before
// its own fields: which output it is and in which version of its layout (`format`,
// `format_version`), and which model and section its numbers describe (`model`, `section`), so a
// script never has to guess what `apex_height_m` or a fixed point's state means.
//
//   format          "pronk-<command>": pronk-simulate, pronk-map, pronk-scan, pronk-basin,
//                   pronk-stepdown, pronk-robustness, pronk-recover, pronk-deadbeat, pronk-export. Files keep
//                   their own formats: pronk-result (optimize, deadbeat --out), pronk-partial
//                   (--shard), pronk-policy (export --format json).
//   format_version  1; raised only when a field is renamed or changes meaning (adding fields
//                   does not raise it).
//   model           the scenario's model kind: "slip", the spring-loaded inverted pendulum (a point
//                   mass on one massless spring leg; a scenario file without "model" is one), or
//                   "biped", the two-leg spring-mass model (src/core/models/biped.ts), or
//                   "lateral", the lateral leg-spring model (a rigid body in the horizontal plane).
//   section         the Poincaré section its strides run between and its states are taken on:
//                   "flight_apex" for the single-leg runner and two-leg running (apex height and
//                   forward speed), "single_support_apex" for two-leg walking (height, forward
//                   speed and the offset from the stance foot at the highest point in single support),
//                   "left_touchdown" for the lateral model (speed, heading to the body axis and
//                   angular velocity at the left leg's touchdown).

import { kindOf, type ModelKind, type SectionName } from './models/kind.js';

import { jsonChunks } from './json-stream.js';

export const JSON_FORMAT_VERSION = 1;
export const MODEL_KIND: ModelKind = 'slip';
export const SECTION: SectionName = 'flight_apex';

export type JsonCommand = 'simulate' | 'map' | 'scan' | 'basin' | 'stepdown' | 'robustness' | 'deadbeat' | 'export' | 'recover';

export interface JsonHeader {
  format: `pronk-${JsonCommand}`;
  format_version: typeof JSON_FORMAT_VERSION;
  model: ModelKind;
  section: SectionName;
}

/** Which model and section a result describes (default: the single-leg model's). */
export interface ModelHeader {
  model: ModelKind;
  section: SectionName;
}

/** The header of every lateral leg-spring output. */
export const LATERAL_HEADER: ModelHeader = { model: 'lateral', section: 'left_touchdown' };

/** The header fields of a scenario's kind. */
export function modelHeader(scenario: { model?: string; start?: { gait?: string } }): ModelHeader {
  if (scenario.model === 'lateral') return LATERAL_HEADER;
  if (kindOf(scenario) === 'biped') {
    return { model: 'biped', section: scenario.start?.gait === 'walking' ? 'single_support_apex' : 'flight_apex' };
  }
  return { model: MODEL_KIND, section: SECTION };
}

export type Described<T> = JsonHeader & T;

/** The result with its header first. */
export function described<T extends object>(command: JsonCommand, result: T, header?: ModelHeader): Described<T> {
  return {
    format: `pronk-${command}`,
    format_version: JSON_FORMAT_VERSION,
    model: header?.model ?? MODEL_KIND,
    section: header?.section ?? SECTION,
    ...result,
  };
}

/** The `--json` text: the described result, 2-space indented, with a final newline. */
export function jsonText(command: JsonCommand, result: object, header?: ModelHeader): string {
  return `${JSON.stringify(described(command, result, header), null, 2)}\n`;
}

/** The `--json` text of jsonText in pieces (src/core/json-stream.ts), for outputs too large for one string. */
export function* jsonTextChunks(command: JsonCommand, result: object, header?: ModelHeader): Generator<string> {
  yield* jsonChunks(described(command, result, header));
  yield '\n';
}
