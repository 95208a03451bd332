// The FILE argument every scenario command takes: a scenario file, or without it the built-in
// demo (said in a status line on stderr; stdout holds the result only).
import type { AnyScenario } from '../core/models/any.js';
import type { InputIssue } from '../core/errors.js';
import type { ModelKind } from '../core/models/kind.js';
import type { Scenario } from '../core/scenario.js';
import type { CliIO } from './command.js';
import { status } from './progress.js';

export const DEMO_SOURCE = 'scenarios/demo.json';

// The model kinds each command runs (src/core/models/kind.ts); every other kind is refused by name
// (exit 2), never run as another kind. A "lateral" scenario has its own type: the commands that run
// it read FILE with anyScenarioArgument.
export const COMMAND_KINDS: Record<string, readonly ModelKind[]> = {
  simulate: ['slip', 'biped', 'lateral'],
  map: ['slip', 'biped', 'lateral'],
  robustness: ['slip', 'biped', 'lateral'],
  stepdown: ['slip', 'biped'],
  scan: ['slip', 'biped', 'lateral'],
  basin: ['slip', 'biped', 'lateral'],
  recover: ['slip', 'lateral'],
  // commands that take a study or result file rather than a scenario: listed for the hint below
  deadbeat: ['slip'],
  optimize: ['slip', 'biped', 'lateral'],
  export: ['slip', 'biped', 'lateral'],
};

/** The commands that run a scenario of this kind, for a refusal's message. */
export function commandsRunning(kind: string): string[] {
  return Object.entries(COMMAND_KINDS)
    .filter(([, kinds]) => (kinds as readonly string[]).includes(kind))
    .map(([command]) => command);
}

/**
 * A model-kind refusal (`scenario model "K": CMD supports ...`, from requireKind, at `model` or
 * `scenario.model`) with the commands that do run kind K appended; every other issue unchanged.
 */
export function withKindHint(issue: InputIssue): InputIssue {
  const match = /^scenario model "(\w+)": /.exec(issue.message ?? '');
  if (!match || !(issue.path === 'model' || issue.path.endsWith('.model'))) return issue;
  const commands = commandsRunning(match[1]);
  const runs = commands.length ? `pronk ${commands.join(', ')} run a "${match[1]}" scenario` : `no pronk command runs a "${match[1]}" scenario yet`;
  return { ...issue, message: `${issue.message}; ${runs}` };
}

export async function scenarioArgument(file: string | undefined, io: CliIO, command: string): Promise<Scenario> {
  // loaded here, not with the command, so that `pronk COMMAND --help` never waits for the validators
  const { demoScenario, parseScenario, readScenarioValue } = await import('../core/scenario.js');
  const { modelKindOf, refuseModelKind, requireKind } = await import('../core/models/kind.js');
  if (file !== undefined) {
    const value = await readScenarioValue(file);
    const all = COMMAND_KINDS[command] ?? ['slip'];
    // the kinds of the single-leg Scenario type; a lateral scenario is read by anyScenarioArgument
    const supported: readonly ModelKind[] = all.filter((k) => k !== 'lateral');
    const kind = modelKindOf(value, file);
    if (!supported.includes(kind)) refuseModelKind(command, all, kind, file);
    const scenario = parseScenario(value, { source: file, command });
    requireKind(scenario, command, supported, file);
    return scenario;
  }
  status(io, command, `no FILE given; running the built-in demo scenario (${DEMO_SOURCE})`);
  return demoScenario();
}

/** The FILE argument of a command that runs the lateral model too (the demo is the single-leg one). */
export async function anyScenarioArgument(file: string | undefined, io: CliIO, command: string): Promise<AnyScenario> {
  const supported = COMMAND_KINDS[command] ?? ['slip'];
  if (file !== undefined && supported.includes('lateral')) {
    const { readScenarioValue } = await import('../core/scenario.js');
    const { modelKindOf } = await import('../core/models/kind.js');
    const value = await readScenarioValue(file);
    if (modelKindOf(value, file) === 'lateral') {
      const { parseLateralScenario } = await import('../core/models/lateral.js');
      return { kind: 'lateral', scenario: parseLateralScenario(value, { source: file }) };
    }
    if (!supported.includes('slip') && !supported.includes('biped')) {
      const { refuseModelKind } = await import('../core/models/kind.js');
      refuseModelKind(command, supported, modelKindOf(value, file), file);
    }
  }
  const scenario = await scenarioArgument(file, io, command);
  return { kind: scenario.model === 'biped' ? 'biped' : 'slip', scenario };
}
