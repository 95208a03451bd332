// How the command line describes a scenario's policy and terrain in words, shared by the commands'
// text reports (simulate, map, scan, basin, stepdown, robustness, deadbeat and the two-leg views).

import type { AnglePolicy, Scenario, StiffnessPolicy, Terrain } from '../core/scenario.js';
import { count, plain } from './format.js';

export function describeAngle(angle: AnglePolicy): string {
  switch (angle.kind) {
    case 'fixed':
      return `fixed attack angle ${plain(angle.attack_deg)} deg`;
    case 'retraction': {
      const rate = angle.rate_deg_per_s;
      const motion =
        rate > 0
          ? `retracting (steepening) at ${plain(rate)} deg/s`
          : rate < 0
            ? `protracting (flattening) at ${plain(-rate)} deg/s`
            : 'held (rate 0)';
      const { min_deg: low, max_deg: high } = angle;
      const clamp =
        low !== undefined && high !== undefined
          ? `, kept within ${plain(low)}-${plain(high)} deg`
          : low !== undefined
            ? `, at least ${plain(low)} deg`
            : high !== undefined
              ? `, at most ${plain(high)} deg`
              : '';
      return `attack ${plain(angle.attack_at_apex_deg)} deg at apex, ${motion}${clamp}`;
    }
    case 'time_table': {
      const times = angle.time_since_apex_s;
      const angles = angle.attack_deg;
      return (
        `attack from a table of ${count(times.length, 'knot')} over ${plain(times[0])}-${plain(times[times.length - 1])} s after apex ` +
        `(${plain(Math.min(...angles))}-${plain(Math.max(...angles))} deg)`
      );
    }
  }
}

export function describeStiffness(stiffness: StiffnessPolicy, scenario: Scenario): string {
  switch (stiffness.kind) {
    case 'constant':
      return `constant leg stiffness ${plain(scenario.body.leg_stiffness_N_per_m)} N/m`;
    case 'split':
      return `stiffness ${plain(stiffness.compression_N_per_m)} N/m in compression, ${plain(stiffness.extension_N_per_m)} N/m in extension`;
    case 'time_table': {
      const range = (values: number[]) => `${plain(Math.min(...values))}-${plain(Math.max(...values))} N/m`;
      return (
        `stiffness by touchdown time, ${count(stiffness.time_since_apex_s.length, 'knot')} ` +
        `(compression ${range(stiffness.compression_N_per_m)}, extension ${range(stiffness.extension_N_per_m)})`
      );
    }
  }
}

export function describeTerrain(terrain: Terrain): string {
  switch (terrain.kind) {
    case 'flat':
      return 'flat ground';
    case 'steps': {
      const heights = terrain.ground_heights_m;
      const shown = heights.slice(0, 6).map(plain).join(', ') + (heights.length > 6 ? ', ...' : '');
      return `steps: ground ${shown} m at successive touchdowns, the last height holding after`;
    }
    case 'random_walk':
      return `random walk, each touchdown the previous height plus N(0, ${plain(terrain.sigma_m)} m), seed ${terrain.seed}`;
    case 'random_heights':
      return `random heights, each touchdown independently N(0, ${plain(terrain.sigma_m)} m), seed ${terrain.seed}`;
  }
}
