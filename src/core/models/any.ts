// A scenario of any model kind, as the commands that run more than one kind (simulate, map, scan,
// basin, recover) receive it from their FILE argument (src/cli/scenario-argument.ts).

import type { Scenario } from '../scenario.js';
import type { LateralScenario } from './lateral.js';

/** "biped" scenarios share the single-leg Scenario type (models/biped.ts) and its pipeline. */
export type AnyScenario = { kind: 'slip' | 'biped'; scenario: Scenario } | { kind: 'lateral'; scenario: LateralScenario };
