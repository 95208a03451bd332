// A scenario of any model kind, for the commands that run more than one (simulate, map, recover).
// Single-leg scenarios go through scenario.ts exactly as before.

import { parseScenario, readScenarioValue, type Scenario } from '../scenario.js';
import { type ModelKind, modelKindOf, refuseModelKind } from './kind.js';
import { type LateralScenario, parseLateralScenario } from './lateral.js';

/** "biped" scenarios share the single-leg Scenario type (models/biped.ts) and its pipeline. */
export type AnyScenario = { kind: 'slip' | 'biped'; scenario: Scenario } | { kind: 'lateral'; scenario: LateralScenario };

/** Validate a scenario of the kinds a command supports; any other kind is refused by name. */
export function parseAnyScenario(
  value: unknown,
  options: { source?: string; command: string; supported: readonly ModelKind[] },
): AnyScenario {
  const kind = modelKindOf(value, options.source);
  if (!options.supported.includes(kind)) refuseModelKind(options.command, options.supported, kind, options.source);
  if (kind === 'lateral') return { kind, scenario: parseLateralScenario(value, options) };
  return { kind, scenario: parseScenario(value, options) };
}

export async function readAnyScenarioFile(
  path: string,
  options: { command: string; supported: readonly ModelKind[] },
): Promise<AnyScenario> {
  return parseAnyScenario(await readScenarioValue(path), { ...options, source: path });
}
