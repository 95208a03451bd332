// The caution printed with every result a user might carry to hardware.

export const SAFETY_CAUTION =
  'Simulation results are not a guarantee: a spring-mass model leaves out much of a real robot ' +
  '(leg and actuator dynamics, torque and current limits, foot slip, sensing delay, wear). ' +
  'Validate a policy in simulation with margins first; then test it tethered, with an emergency ' +
  'stop within reach, current and torque limits set, and the area cleared of people. Follow your ' +
  "lab's safety procedures, local codes and licensed engineering practice (an ISO 12100 risk " +
  'assessment; ISO 13482 or ISO 10218 where they apply).';
