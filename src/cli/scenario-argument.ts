// The FILE argument every scenario command takes: a scenario file, or without it the built-in
// demo (said on stderr unless the output is machine-readable).
import { demoScenario, readScenarioFile, type Scenario } from '../core/scenario.js';
import type { CliIO } from './main.js';

export const DEMO_SOURCE = 'scenarios/demo.json';

export async function scenarioArgument(file: string | undefined, io: CliIO, command: string, quiet: boolean): Promise<Scenario> {
  if (file !== undefined) return readScenarioFile(file);
  if (!quiet) io.stderr.write(`pronk ${command}: no FILE given; running the built-in demo scenario (${DEMO_SOURCE})\n`);
  return demoScenario();
}
