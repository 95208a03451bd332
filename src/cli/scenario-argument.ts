// The FILE argument every scenario command takes: a scenario file, or without it the built-in
// demo (said in a status line on stderr; stdout holds the result only).
import type { AnyScenario } from '../core/models/any.js';
import type { ModelKind } from '../core/models/kind.js';
import type { Scenario } from '../core/scenario.js';
import type { CliIO } from './main.js';
import { status } from './progress.js';

export const DEMO_SOURCE = 'scenarios/demo.json';

export async function scenarioArgument(file: string | undefined, io: CliIO, command: string): Promise<Scenario> {
  // loaded here, not with the command, so that `pronk COMMAND --help` never waits for the validators
  const { demoScenario, readScenarioFile } = await import('../core/scenario.js');
  if (file !== undefined) return readScenarioFile(file, { command });
  status(io, command, `no FILE given; running the built-in demo scenario (${DEMO_SOURCE})`);
  return demoScenario();
}

/** The FILE argument of a command that runs several model kinds (the demo is the single-leg one). */
export async function anyScenarioArgument(
  file: string | undefined,
  io: CliIO,
  command: string,
  supported: readonly ModelKind[],
): Promise<AnyScenario> {
  const { readAnyScenarioFile } = await import('../core/models/any.js');
  if (file !== undefined) return readAnyScenarioFile(file, { command, supported });
  return { kind: 'slip', scenario: await scenarioArgument(file, io, command) }; // the demo is a single-leg scenario
}
