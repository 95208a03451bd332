export function fixedAngleModel(
  L: object,
  body: { mass: number; leg: number; k: number; g: number },
  attackRad: number,
  options: { rtol: number; atol: number; terrain?: { sigma: number; seed: number } },
): { fields: Float64Array };
