// The names a person reads for the scenario's numbers: "Attack angle at apex (°)" where the file
// says policy.angle.attack_at_apex_deg. Figures put them on axes; the workbench puts them on its
// fields, selects and tables, with the path beside them as a tooltip. Units come from the field
// names (every scenario field carries its unit).

export interface ParameterName {
  label: string;
  /** '' for a pure number (a count, a seed, a tolerance). */
  unit: string;
}

const FIXED: Record<string, ParameterName> = {
  'body.mass_kg': { label: 'Mass', unit: 'kg' },
  'body.leg_length_m': { label: 'Rest leg length', unit: 'm' },
  'body.leg_stiffness_N_per_m': { label: 'Leg stiffness', unit: 'N/m' },
  'body.gravity_m_per_s2': { label: 'Gravity', unit: 'm/s²' },
  'body.leg_damping_N_s_per_m': { label: 'Leg damping', unit: 'N·s/m' },
  'start.apex_height_m': { label: 'Start apex height', unit: 'm' },
  'start.forward_speed_m_per_s': { label: 'Start forward speed', unit: 'm/s' },
  strides: { label: 'Strides', unit: '' },
  'policy.angle.attack_deg': { label: 'Attack angle', unit: '°' },
  'policy.angle.attack_at_apex_deg': { label: 'Attack angle at apex', unit: '°' },
  'policy.angle.rate_deg_per_s': { label: 'Retraction rate', unit: '°/s' },
  'policy.angle.min_deg': { label: 'Clamp: lowest angle', unit: '°' },
  'policy.angle.max_deg': { label: 'Clamp: steepest angle', unit: '°' },
  'policy.stiffness.compression_N_per_m': { label: 'Compression stiffness', unit: 'N/m' },
  'policy.stiffness.extension_N_per_m': { label: 'Extension stiffness', unit: 'N/m' },
  'terrain.sigma_m': { label: 'Terrain σ', unit: 'm' },
  'terrain.seed': { label: 'Terrain seed', unit: '' },
  'integrator.relative_tolerance': { label: 'Relative tolerance', unit: '' },
  'integrator.absolute_tolerance': { label: 'Absolute tolerance', unit: '' },
  'integrator.max_steps_per_stance': { label: 'Max steps per stance', unit: '' },
  'integrator.apex_accuracy_m': { label: 'Apex accuracy', unit: 'm' },
  // the two-leg model (models/biped.ts)
  'start.offset_m': { label: 'Start offset, body − stance foot', unit: 'm' },
  'legs.left.leg_length_m': { label: 'Left leg: rest length', unit: 'm' },
  'legs.left.stiffness_scale': { label: 'Left leg: stiffness factor', unit: '×' },
  'legs.left.leg_damping_N_s_per_m': { label: 'Left leg: damping', unit: 'N·s/m' },
  'legs.right.leg_length_m': { label: 'Right leg: rest length', unit: 'm' },
  'legs.right.stiffness_scale': { label: 'Right leg: stiffness factor', unit: '×' },
  'legs.right.leg_damping_N_s_per_m': { label: 'Right leg: damping', unit: 'N·s/m' },
  // the lateral leg-spring model (models/lateral.ts)
  'body.moment_of_inertia_kg_m2': { label: 'Moment of inertia', unit: 'kg·m²' },
  'body.attachment_offset_m': { label: 'Leg attachment offset d', unit: 'm' },
  'body.attachment_rate_m_per_s': { label: 'Attachment offset rate', unit: 'm/s' },
  'start.speed_m_per_s': { label: 'Start speed', unit: 'm/s' },
  'start.heading_to_body_deg': { label: 'Start heading to body axis', unit: '°' },
  'start.angular_velocity_deg_per_s': { label: 'Start angular velocity', unit: '°/s' },
  'policy.angle.angle_to_body_deg': { label: 'Touchdown angle to body axis', unit: '°' },
};

// Table entries: `policy.angle.attack_deg[2]` is row 2 of the angle table.
const ROWS: Record<string, ParameterName> = {
  'policy.angle.time_since_apex_s': { label: 'Angle table: time since apex', unit: 's' },
  'policy.angle.attack_deg': { label: 'Angle table: attack angle', unit: '°' },
  'policy.stiffness.time_since_apex_s': { label: 'Stiffness table: touchdown time since apex', unit: 's' },
  'policy.stiffness.compression_N_per_m': { label: 'Stiffness table: compression', unit: 'N/m' },
  'policy.stiffness.extension_N_per_m': { label: 'Stiffness table: extension', unit: 'N/m' },
  'terrain.ground_heights_m': { label: 'Ground height at touchdown', unit: 'm' },
};

/** The unit of a scenario path, from its field name. */
export function unitOfPath(path: string): string {
  const name = path.replace(/\[\d+\]$/, '').split('.').pop() ?? '';
  const units: [RegExp, string][] = [
    [/_deg_per_s$/, '°/s'],
    [/_deg$/, '°'],
    [/_N_s_per_m$/, 'N·s/m'],
    [/_N_per_m$/, 'N/m'],
    [/_m_per_s2$/, 'm/s²'],
    [/_m_per_s$/, 'm/s'],
    [/_kg_m2$/, 'kg·m²'],
    [/_kg$/, 'kg'],
    [/_s$/, 's'],
    [/_m$/, 'm'],
    [/_N$/, 'N'],
    [/_J$/, 'J'],
  ];
  for (const [pattern, unit] of units) if (pattern.test(name)) return unit;
  return '';
}

/** The label and unit of a scenario path; a path not known here is its own label. */
export function parameterName(path: string): ParameterName {
  const fixed = FIXED[path];
  if (fixed) return fixed;
  const row = /^(.*)\[(\d+)\]$/.exec(path);
  if (row && ROWS[row[1]]) return { label: `${ROWS[row[1]].label}, row ${row[2]}`, unit: ROWS[row[1]].unit };
  return { label: path, unit: unitOfPath(path) };
}

/** "Attack angle at apex (°)": the label with its unit, for an axis or a table heading. */
export function parameterTitle(path: string): string {
  const { label, unit } = parameterName(path);
  return unit ? `${label} (${unit})` : label;
}
