// Layout of every flat buffer that crosses the JS/WASM boundary.
//
// This one file is compiled twice: by asc into the kernel and by tsc into the
// TypeScript core, so the two sides cannot disagree about an offset. Keep it to
// plain `export const NAME = <integer literal>;` lines (valid in both languages).
//
// All buffers are little-endian f64 unless stated. Inside the kernel every
// quantity is SI with angles in radians; the TypeScript core converts degrees
// at the boundary.

// ---------------------------------------------------------------------------
export const LAYOUT_VERSION = 5; // bump on any change below

// Model block: (M_SIZE) f64, written by the TS core before a call, read-only
// inside the kernel. A batch takes an array of them, (models x M_SIZE), and
// each rollout picks one by I_MODEL (parameter scans run in one call). Table "pointers" are byte offsets into WASM memory stored
// as f64 (exact below 2^53).
export const M_MASS = 0; // kg
export const M_LEG_LENGTH = 1; // m, rest length L0
export const M_STIFFNESS = 2; // N/m, used by stiffness kind CONSTANT
export const M_GRAVITY = 3; // m/s^2
export const M_DAMPING = 4; // N·s/m, viscous leg damping (0 = none)
export const M_ANGLE_KIND = 5; // ANGLE_* below
export const M_ATTACK = 6; // rad: fixed attack angle, or attack at apex for retraction
export const M_RETRACTION_RATE = 7; // rad/s, positive steepens the leg
export const M_ANGLE_MIN = 8; // rad, clamp for retraction (-1e300 = none)
export const M_ANGLE_MAX = 9; // rad, clamp for retraction (+1e300 = none)
export const M_ANGLE_TABLE_N = 10; // knots in the angle time table
export const M_ANGLE_TABLE_T = 11; // ptr: (n) f64 time since apex, s, strictly increasing
export const M_ANGLE_TABLE_A = 12; // ptr: (n) f64 attack angle, rad
export const M_STIFFNESS_KIND = 13; // STIFFNESS_* below
export const M_K_COMPRESSION = 14; // N/m, split: until maximum compression
export const M_K_EXTENSION = 15; // N/m, split: after maximum compression
export const M_STIFFNESS_TABLE_N = 16; // knots in the stiffness time table
export const M_STIFFNESS_TABLE_T = 17; // ptr: (n) f64 touchdown time since apex, s
export const M_STIFFNESS_TABLE_KC = 18; // ptr: (n) f64 compression stiffness, N/m
export const M_STIFFNESS_TABLE_KE = 19; // ptr: (n) f64 extension stiffness, N/m
export const M_TERRAIN_KIND = 20; // TERRAIN_* below
export const M_TERRAIN_SIGMA = 21; // m, Gaussian step (random walk) or height (independent)
export const M_TERRAIN_SEED = 22; // integer seed, 0 <= seed < 2^53
export const M_STEPS_N = 23; // entries in the per-touchdown ground height list
export const M_STEPS_PTR = 24; // ptr: (n) f64 ground height at touchdown i, m
export const M_RTOL = 25; // integrator relative tolerance
export const M_ATOL = 26; // integrator absolute tolerance
export const M_MAX_STEPS = 27; // integrator step limit per stance
export const M_TARGET_HEIGHT = 28; // m, apex height the summary's RMS is taken about
export const M_TARGET_SPEED = 29; // m/s, forward speed the summary's RMS is taken about
export const M_MODEL_KIND = 30; // MODEL_* below (0 = the single-leg model)
// Two-leg model (MODEL_BIPED): leg 0 is the left leg, leg 1 the right. Each leg's rest length,
// stiffness factor (on every stiffness of the schedule) and damping; M_LEG_LENGTH, M_STIFFNESS
// and M_DAMPING are not read by it.
export const M_BIPED_LENGTH_0 = 32; // m
export const M_BIPED_LENGTH_1 = 33; // m
export const M_BIPED_STIFFNESS_SCALE_0 = 34; // factor on the stiffness schedule
export const M_BIPED_STIFFNESS_SCALE_1 = 35;
export const M_BIPED_DAMPING_0 = 36; // N·s/m
export const M_BIPED_DAMPING_1 = 37;
export const M_SIZE = 40;

export const MODEL_SLIP = 0;
export const MODEL_BIPED = 1;

export const ANGLE_FIXED = 0;
export const ANGLE_RETRACTION = 1;
export const ANGLE_TIME_TABLE = 2;

export const STIFFNESS_CONSTANT = 0;
export const STIFFNESS_SPLIT = 1;
export const STIFFNESS_TIME_TABLE = 2;

export const TERRAIN_FLAT = 0;
export const TERRAIN_STEPS = 1;
export const TERRAIN_RANDOM_WALK = 2;
export const TERRAIN_INDEPENDENT = 3; // each touchdown height drawn afresh: sigma * N(0,1)

// ---------------------------------------------------------------------------
// Rollout inputs: (rollouts x I_SIZE) f64, written by the TS core.
export const I_APEX_HEIGHT = 0; // m, start apex height (absolute)
export const I_FORWARD_SPEED = 1; // m/s, start forward speed (>= 0)
export const I_STREAM = 2; // integer terrain stream index (same stream => same terrain)
export const I_MASS_SCALE = 3; // factor on M_MASS (model mismatch), 1 = nominal
export const I_STIFFNESS_SCALE = 4; // factor on every stiffness, 1 = nominal
export const I_LEG_SCALE = 5; // factor on M_LEG_LENGTH, 1 = nominal
export const I_MODEL = 6; // index of this rollout's model block in the batch's (models x M_SIZE) array
// Two-leg model only (the single-leg model ignores them):
export const I_SECTION_KIND = 7; // SECTION_* below: where the rollout starts
export const I_SECTION_OFFSET = 8; // m, single-support apex: body x minus the stance foot's x
export const I_SECTION_LEG = 9; // single-support apex: the stance leg; flight apex: the leg that lands first (2: both)
export const I_SIZE = 10;

export const SECTION_FLIGHT_APEX = 0; // vy = 0 in flight
export const SECTION_SINGLE_SUPPORT_APEX = 1; // vy from + to - with one leg on the ground

// ---------------------------------------------------------------------------
// Stride records: (rollouts x strides x R_SIZE) f64, written by runBatch when a
// record buffer is given. Record s of a rollout covers apex s -> apex s+1. The
// record of the stride that failed holds what was known when it failed and NaN
// elsewhere; records after it are all NaN.
export const R_APEX_HEIGHT = 0; // m, apex at the start of the stride
export const R_APEX_SPEED = 1; // m/s
export const R_APEX_TIME = 2; // s since the start of the rollout
export const R_APEX_X = 3; // m
export const R_APEX_TO_TOUCHDOWN = 4; // s
export const R_CONTACT = 5; // s
export const R_STRIDE_TIME = 6; // s, apex to apex
export const R_ATTACK = 7; // rad, leg angle from horizontal at touchdown
export const R_GROUND = 8; // m, ground height under this touchdown
export const R_PEAK_FORCE = 9; // N, peak leg force in stance
export const R_MAX_COMPRESSION = 10; // m, L0 - min r
export const R_PEAK_FRICTION = 11; // peak |Fx/Fy| in stance
export const R_ENERGY_BEFORE = 12; // J, at the starting apex (potential from height 0)
export const R_ENERGY_AFTER = 13; // J, at the next apex
export const R_DISSIPATED = 14; // J, work done by leg damping
export const R_STEPS = 15; // accepted integrator steps in stance
export const R_REJECTED = 16; // rejected integrator steps in stance
export const R_FOOT_X = 17; // m
export const R_TOUCHDOWN_VX = 18; // m/s
export const R_TOUCHDOWN_VY = 19; // m/s
export const R_LIFTOFF_X = 20; // m
export const R_LIFTOFF_Y = 21; // m
export const R_LIFTOFF_VX = 22; // m/s
export const R_LIFTOFF_VY = 23; // m/s
export const R_LIFTOFF_ANGLE = 24; // rad, leg angle from horizontal at liftoff (foot behind)
export const R_NEXT_APEX_HEIGHT = 25; // m
export const R_NEXT_APEX_SPEED = 26; // m/s
export const R_NEXT_APEX_X = 27; // m
export const R_NEXT_APEX_TIME = 28; // s since the start of the rollout
export const R_K_COMPRESSION = 29; // N/m used before maximum compression
export const R_K_EXTENSION = 30; // N/m used after maximum compression
export const R_STATUS = 31; // STATUS_* of this stride
export const R_MAX_COMPRESSION_TIME = 32; // s after touchdown
export const R_LIFTOFF_LEG_FORCE = 33; // N, leg force when the foot left (0 unless damping)
// Two-leg model (NaN for the single-leg model). Times are seconds since the stride's section.
// The fields above keep their meaning: the apex is the stride's section state (height, speed),
// touchdown fields describe the stride's one touchdown, peak force and compression the larger
// of the two legs, energies include the springs' energy.
export const R_GAIT = 34; // GAIT_* below
export const R_SECTION_KIND = 35; // SECTION_* at the start of the stride
export const R_SECTION_OFFSET = 36; // m, body x minus stance foot x (single-support apex)
export const R_SECTION_LEG = 37; // stance leg (single-support apex) or leg that lands next (flight apex)
export const R_NEXT_SECTION_KIND = 38;
export const R_NEXT_SECTION_OFFSET = 39;
export const R_NEXT_SECTION_LEG = 40;
export const R_TOUCHDOWN_TIME_0 = 41; // s, touchdown of the left leg in this stride (NaN: none)
export const R_TOUCHDOWN_TIME_1 = 42;
export const R_LIFTOFF_TIME_0 = 43; // s, liftoff of the left leg in this stride (NaN: none)
export const R_LIFTOFF_TIME_1 = 44;
export const R_DOUBLE_START = 45; // s, start of double support (NaN: none)
export const R_DOUBLE_END = 46; // s, its end
export const R_PEAK_FORCE_0 = 47; // N, peak left leg force in the stride
export const R_PEAK_FORCE_1 = 48;
export const R_PEAK_VERTICAL_FORCE = 49; // N, peak of the summed vertical ground force
export const R_SIZE = 50;

export const GAIT_WALKING = 0; // single and double support, no flight
export const GAIT_RUNNING = 1; // single support and flight, no double support
export const GAIT_HOPPING = 2; // both legs land and leave together (flight apex start with I_SECTION_LEG = 2)

// ---------------------------------------------------------------------------
// Rollout summaries: (rollouts x S_SIZE) f64, always written by runBatch.
export const S_STATUS = 0; // STATUS_* of the rollout (OK = all strides completed)
export const S_STRIDES_COMPLETED = 1; // strides completed; = index of the failing stride
export const S_FINAL_HEIGHT = 2; // m, last apex reached
export const S_FINAL_SPEED = 3; // m/s
export const S_PREVIOUS_HEIGHT = 4; // m, the apex before the last (= start if none)
export const S_PREVIOUS_SPEED = 5; // m/s
export const S_MAX_PEAK_FORCE = 6; // N, over completed strides
export const S_MAX_FRICTION = 7; // over completed strides
export const S_MAX_COMPRESSION = 8; // m, over completed strides
export const S_MIN_ATTACK = 9; // rad, over touchdowns reached
export const S_MAX_ATTACK = 10; // rad
export const S_SUM_SQ_HEIGHT_ERROR = 11; // m^2, sum over completed strides of (next apex - target)^2
export const S_SUM_SQ_SPEED_ERROR = 12; // (m/s)^2
export const S_TIME = 13; // s, time of the last apex reached
export const S_DISTANCE = 14; // m, x of the last apex reached
export const S_STEPS = 15; // integrator steps, all strides
export const S_REJECTED = 16; // rejected steps, all strides
// Two-leg model: the section state besides height and speed.
export const S_FINAL_OFFSET = 17; // m, offset at the last section reached (single-support apex)
export const S_PREVIOUS_OFFSET = 18;
export const S_FINAL_LEG = 19; // R_NEXT_SECTION_LEG of the last stride
export const S_FINAL_SECTION_KIND = 20; // SECTION_* of the last section reached
export const S_MAX_VERTICAL_FORCE = 21; // N, peak summed vertical ground force
export const S_SIZE = 22;

// ---------------------------------------------------------------------------
// Rollout / stride status codes. Failure is data: nothing here aborts.
export const STATUS_OK = 0;
export const STATUS_BODY_HIT_GROUND = 1; // the point mass reached the ground
export const STATUS_FELL_BACKWARD = 2; // forward speed fell below zero in stance
export const STATUS_NO_LIFTOFF = 3; // stance did not end within its time limit
export const STATUS_NO_APEX = 4; // left the ground still descending
export const STATUS_LEG_NOT_PLACEABLE = 5; // apex below the touchdown height
export const STATUS_STEP_UNDERFLOW = 6; // integrator step size underflow
export const STATUS_NON_FINITE = 7; // a state became NaN or infinite
export const STATUS_STEP_LIMIT = 8; // integrator step limit reached (or the touchdown search's)
export const STATUS_ATTACK_OUT_OF_RANGE = 9; // the commanded angle left (0, 90 deg] before touchdown
// Two-leg model (codes 10 to 12; others append after them, never renumbered):
export const STATUS_GAIT_CHANGED = 10; // a walking stride had flight, or a running stride double support
export const STATUS_STALLED = 11; // forward speed reached zero, or time ran out, in double support
export const STATUS_NO_SECTION = 12; // a second touchdown before the stride's section was reached
// Lateral leg-spring model: codes 13 and 14 (STATUS_STALLED_FORWARD, STATUS_LEG_UNLOADED, in its
// section at the end of this file); 15 reserved for it.
export const STATUS_COUNT = 15;
// Statuses the single-leg model can report (0 .. STATUS_COUNT_SLIP - 1).
export const STATUS_COUNT_SLIP = 10;
// Statuses the two-leg model can report (0 .. STATUS_COUNT_BIPED - 1).
export const STATUS_COUNT_BIPED = 13;

// ---------------------------------------------------------------------------
// Trajectory samples: (samples x T_SIZE) f64, written by traceRollout.
export const T_TIME = 0; // s since the start
export const T_X = 1; // m, body
export const T_Y = 2; // m
export const T_VX = 3; // m/s
export const T_VY = 4; // m/s
export const T_FOOT_X = 5; // m, foot (in flight: where the commanded leg points)
export const T_FOOT_Y = 6; // m
export const T_LEG_FORCE = 7; // N, along the leg (0 in flight)
export const T_PHASE = 8; // PHASE_* below
export const T_STRIDE = 9; // stride index
// Two-leg model: T_FOOT_X, T_FOOT_Y and T_LEG_FORCE are the left leg's, these the right's
// (single-leg model: NaN, NaN, 0). A swing foot is drawn where its commanded leg points.
export const T_FOOT2_X = 10; // m
export const T_FOOT2_Y = 11; // m
export const T_LEG_FORCE2 = 12; // N
export const T_SIZE = 13;

export const PHASE_FLIGHT = 0;
export const PHASE_STANCE = 1; // one leg on the ground
export const PHASE_DOUBLE = 2; // two legs on the ground (two-leg model)

// ===========================================================================
// Lateral leg-spring model ("model": "lateral"): a rigid body in the horizontal
// plane on one spring leg at a time, left and right alternating, no aerial
// phase. Its own buffers, prefixed LM_ / LI_ / LR_ / LS_ / LT_.

// Statuses of the lateral model (appended; 10..12 belong to the two-leg model).
export const STATUS_STALLED_FORWARD = 13; // the velocity along the body axis fell to zero in stance
export const STATUS_LEG_UNLOADED = 14; // at touchdown the body already moved away from the new foot
// 15: reserved for the lateral model.

// Model block: (LM_SIZE) f64, SI and radians.
export const LM_MASS = 0; // kg
export const LM_INERTIA = 1; // kg m^2, about the centre of mass (vertical axis)
export const LM_LEG_LENGTH = 2; // m, rest length L0
export const LM_STIFFNESS = 3; // N/m
export const LM_OFFSET = 4; // m, d0: leg attachment on the body axis ahead (+) of the centre of mass at touchdown
export const LM_OFFSET_RATE = 5; // m/s, d1: d(t) = d0 + d1 t, t since touchdown
export const LM_ANGLE = 6; // rad, leg angle to the body axis at touchdown (foot ahead and to the side)
export const LM_RTOL = 7;
export const LM_ATOL = 8;
export const LM_MAX_STEPS = 9; // integrator steps per stance
export const LM_SIZE = 12;

// Rollout inputs: (rollouts x LI_SIZE) f64. The rollout starts at a left touchdown.
export const LI_X = 0; // m, centre of mass
export const LI_Y = 1; // m
export const LI_THETA = 2; // rad, body axis from the x axis
export const LI_VX = 3; // m/s
export const LI_VY = 4; // m/s
export const LI_OMEGA = 5; // rad/s, body angular velocity
export const LI_KICK_STRIDE = 6; // stride index of the kick (-1: none)
export const LI_KICK_TIME = 7; // s after that stride's left touchdown
export const LI_KICK_FORWARD = 8; // m/s, velocity change along the body axis
export const LI_KICK_LEFT = 9; // m/s, velocity change across the body axis (to the left)
export const LI_KICK_ANGLE = 10; // rad, body angle change
export const LI_KICK_RATE = 11; // rad/s, angular velocity change
export const LI_MODEL = 12; // index of the model block in the batch
export const LI_SIZE = 13;

// Stride records: (rollouts x strides x LR_SIZE) f64; record s runs from left
// touchdown s to left touchdown s+1 (NaN where not reached).
export const LR_TIME = 0; // s, left touchdown
export const LR_X = 1;
export const LR_Y = 2;
export const LR_THETA = 3;
export const LR_VX = 4;
export const LR_VY = 5;
export const LR_OMEGA = 6;
export const LR_MID_TIME = 7; // s, right touchdown (= left liftoff)
export const LR_MID_X = 8;
export const LR_MID_Y = 9;
export const LR_MID_THETA = 10;
export const LR_MID_VX = 11;
export const LR_MID_VY = 12;
export const LR_MID_OMEGA = 13;
export const LR_END_TIME = 14; // s, next left touchdown (= right liftoff)
export const LR_END_X = 15;
export const LR_END_Y = 16;
export const LR_END_THETA = 17;
export const LR_END_VX = 18;
export const LR_END_VY = 19;
export const LR_END_OMEGA = 20;
export const LR_PEAK_FORCE = 21; // N, over both stances
export const LR_MAX_COMPRESSION = 22; // m, L0 - min r over both stances
export const LR_ENERGY_BEFORE = 23; // J, kinetic (the leg is at rest length at touchdown)
export const LR_ENERGY_AFTER = 24; // J
export const LR_STEPS = 25;
export const LR_REJECTED = 26;
export const LR_STATUS = 27;
export const LR_KICKED = 28; // 1 if the kick was applied in this stride
export const LR_LEFT_FOOT_X = 29; // m
export const LR_LEFT_FOOT_Y = 30;
export const LR_RIGHT_FOOT_X = 31;
export const LR_RIGHT_FOOT_Y = 32;
export const LR_SIZE = 33;

// Rollout summaries: (rollouts x LS_SIZE) f64.
export const LS_STATUS = 0;
export const LS_STRIDES_COMPLETED = 1;
export const LS_TIME = 2; // s, last left touchdown reached
export const LS_X = 3; // state at the last left touchdown reached
export const LS_Y = 4;
export const LS_THETA = 5;
export const LS_VX = 6;
export const LS_VY = 7;
export const LS_OMEGA = 8;
export const LS_STEPS = 9;
export const LS_REJECTED = 10;
export const LS_KICKED = 11; // 1 if the kick was applied
export const LS_MAX_PEAK_FORCE = 12; // N, over completed strides
export const LS_SIZE = 13;

// Trajectory samples: (samples x LT_SIZE) f64.
export const LT_TIME = 0;
export const LT_X = 1;
export const LT_Y = 2;
export const LT_THETA = 3;
export const LT_VX = 4;
export const LT_VY = 5;
export const LT_OMEGA = 6;
export const LT_FOOT_X = 7;
export const LT_FOOT_Y = 8;
export const LT_LEG_FORCE = 9; // N along the leg
export const LT_SIDE = 10; // +1 left stance, -1 right stance
export const LT_STRIDE = 11;
export const LT_SIZE = 12;
