// Model blocks built by hand for the kernel checks and the benchmark: a fixed-angle, undamped
// body on flat or random-walk ground. `L` is the layout module (assembly/layout.ts in tests,
// its compiled copy in dist/ for the benchmark), so both read the same offsets.

/** body: { mass, leg, k, g } (SI); attackRad; terrain: { sigma, seed } for a random walk, else flat. */
export function fixedAngleModel(L, body, attackRad, { rtol, atol, terrain }) {
  const f = new Float64Array(L.M_SIZE);
  f[L.M_MASS] = body.mass;
  f[L.M_LEG_LENGTH] = body.leg;
  f[L.M_STIFFNESS] = body.k;
  f[L.M_GRAVITY] = body.g;
  f[L.M_DAMPING] = 0;
  f[L.M_ANGLE_KIND] = L.ANGLE_FIXED;
  f[L.M_ATTACK] = attackRad;
  f[L.M_ANGLE_MIN] = -1e300;
  f[L.M_ANGLE_MAX] = 1e300;
  f[L.M_STIFFNESS_KIND] = L.STIFFNESS_CONSTANT;
  f[L.M_TERRAIN_KIND] = terrain ? L.TERRAIN_RANDOM_WALK : L.TERRAIN_FLAT;
  if (terrain) {
    f[L.M_TERRAIN_SIGMA] = terrain.sigma;
    f[L.M_TERRAIN_SEED] = terrain.seed;
  }
  f[L.M_RTOL] = rtol;
  f[L.M_ATOL] = atol;
  f[L.M_MAX_STEPS] = 100_000;
  return { fields: f };
}
