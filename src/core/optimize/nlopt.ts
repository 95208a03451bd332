// The one way Pronk talks to NLopt (the nlopt-js package, an Emscripten build of
// S.G. Johnson's NLopt). It designs around that build's defects:
//  - on load in Node it installs process-wide `unhandledRejection` (aborting) and
//    `uncaughtException` handlers: we remove exactly the handlers it added;
//  - it caches its Float64 heap view at start-up, so once its heap grows every
//    later call throws "detached ArrayBuffer": we capture its WebAssembly.Memory
//    while it loads and serve the heap through a getter;
//  - objective closures handed to it are never released: every run goes through
//    one module-level trampoline per role, reading the current problem from a
//    slot that is cleared after the run;
//  - it has no force-stop, no ftol/stopval and no result code (it reports
//    success even when the budget ran out): the wrapper counts evaluations,
//    keeps the best point, tracks the stopping reason, and stops a run by
//    throwing one private signal through it (the module survives that; an
//    exception from the objective is recorded and rethrown after the run, never
//    let loose inside NLopt);
//  - NLopt's own errors arrive as bare strings: inputs are validated here first.
// In a browser worker the bundler must define `global` as `globalThis` and a
// `window = { atob }` shim must exist before loading (see the workbench).

export type MethodName =
  | 'COBYLA'
  | 'BOBYQA'
  | 'SUBPLEX'
  | 'NELDER_MEAD'
  | 'PRAXIS'
  | 'DIRECT_L'
  | 'CRS2_LM'
  | 'ISRES'
  | 'ESCH'
  | 'MLSL'
  | 'AUGLAG';

export interface MethodInfo {
  /** NLopt's algorithm name. */
  algorithm: string;
  global: boolean;
  /** Takes inequality constraints natively. */
  constraints: boolean;
  /** Needs a local method (MLSL, AUGLAG). */
  needsLocal: boolean;
  summary: string;
}

/** Derivative-free methods offered in studies (NLopt names; references in docs/references.md). */
export const METHODS: Record<MethodName, MethodInfo> = {
  COBYLA: { algorithm: 'LN_COBYLA', global: false, constraints: true, needsLocal: false, summary: 'local, linear approximations, constraints (Powell 1994)' },
  BOBYQA: { algorithm: 'LN_BOBYQA', global: false, constraints: false, needsLocal: false, summary: 'local, quadratic models, bounds only (Powell 2009)' },
  SUBPLEX: { algorithm: 'LN_SBPLX', global: false, constraints: false, needsLocal: false, summary: 'local, Nelder-Mead on subspaces (Rowan 1990)' },
  NELDER_MEAD: { algorithm: 'LN_NELDERMEAD', global: false, constraints: false, needsLocal: false, summary: 'local simplex (Nelder & Mead 1965)' },
  PRAXIS: { algorithm: 'LN_PRAXIS', global: false, constraints: false, needsLocal: false, summary: 'local, principal axis (Brent 1972)' },
  DIRECT_L: { algorithm: 'GN_DIRECT_L', global: true, constraints: false, needsLocal: false, summary: 'global, locally biased DIRECT (Gablonsky & Kelley 2001)' },
  CRS2_LM: { algorithm: 'GN_CRS2_LM', global: true, constraints: false, needsLocal: false, summary: 'global, controlled random search (Kaelo & Ali 2006)' },
  ISRES: { algorithm: 'GN_ISRES', global: true, constraints: true, needsLocal: false, summary: 'global evolution strategy, constraints (Runarsson & Yao 2005)' },
  ESCH: { algorithm: 'GN_ESCH', global: true, constraints: false, needsLocal: false, summary: 'global evolutionary (da Silva Santos et al. 2010)' },
  MLSL: { algorithm: 'G_MLSL_LDS', global: true, constraints: false, needsLocal: true, summary: 'global multi-level single linkage with a local method (Rinnooy Kan & Timmer 1987)' },
  AUGLAG: { algorithm: 'AUGLAG', global: false, constraints: true, needsLocal: true, summary: 'augmented Lagrangian around a local method, constraints' },
};

export interface Problem {
  method: MethodName;
  /** For MLSL and AUGLAG: the local method (must not be MLSL/AUGLAG). */
  localMethod?: MethodName;
  lower: number[];
  upper: number[];
  x0: number[];
  /** Minimized. May throw; the error is rethrown after the run. */
  objective: (x: number[]) => number;
  /** Inequality constraints c(x) <= 0. Only for methods that take them (or AUGLAG). */
  constraints?: ((x: number[]) => number)[];
  constraintTolerance?: number;
  maxEvaluations: number;
  /** Wall-time budget in seconds (0 or absent: none). */
  maxTime_s?: number;
  /** Relative tolerance on x (NLopt's xtol_rel). */
  xtolRel?: number;
  /** Stop when the best value is at or below this. */
  stopValue?: number;
  /**
   * Seed for the stochastic methods. nlopt-js cannot call nlopt_srand; NLopt seeds itself once per
   * module instance from the clock (gettimeofday → Date.now) at the first optimization of any
   * method, so the first run in a module instance is made to see a clock derived from the seed.
   * Later runs in the same instance continue that random stream: for one seed → one result, give
   * each stochastic run a module that has run nothing yet (a fresh worker).
   */
  seed?: number;
}

export type StopReason = 'converged' | 'max_evaluations' | 'max_time' | 'stop_value' | 'cancelled' | 'method_failed';

export interface TracePoint {
  evaluation: number;
  value: number;
  best: number;
}

export interface Outcome {
  /** Best feasible point seen (or best overall when none was feasible). */
  x: number[];
  value: number;
  feasible: boolean;
  evaluations: number;
  reason: StopReason;
  /** Where NLopt itself ended (may differ from the best point seen). */
  final: { x: number[]; value: number };
  trace: TracePoint[];
  /** False when a stochastic method ran on a random stream an earlier run had already used. */
  reproducible: boolean;
  /** The value of the first evaluation (null when none ran). */
  firstValue: number | null;
  /** Every evaluation returned exactly the first value: the run saw a plateau (no direction to follow). */
  flat: boolean;
  /** The evaluation (1-based) at which the best point was found (0 when none ran). */
  bestAt: number;
}

export interface RunControl {
  /** Polled at every evaluation; true stops the run (reason 'cancelled'). */
  shouldStop?: () => boolean;
  /** Called at most every `progressEvery` evaluations. */
  onProgress?: (p: { evaluations: number; best: number; x: number[] }) => void;
  progressEvery?: number;
}

export class OptimizerInputError extends Error {}

// ---------------------------------------------------------------------------------------------
// Loading.

interface NloptOptimize {
  setLowerBounds(v: number[]): void;
  setUpperBounds(v: number[]): void;
  setMinObjective(f: (x: number[], grad: unknown) => number, xtol: number): void;
  addInequalityConstraint(f: (x: number[], grad: unknown) => number, tol: number): void;
  setLocalOptimizer(o: NloptOptimize): void;
  setMaxeval(n: number): void;
  setMaxtime(s: number): void;
  optimize(x0: number[]): { success: boolean; x: number[]; value: number };
}
interface NloptModule {
  ready: Promise<unknown>;
  Optimize: new (algorithm: unknown, n: number) => NloptOptimize;
  Algorithm: Record<string, unknown>;
  GC: { flush(): void };
  HEAPF64: Float64Array;
}

let loading: Promise<NloptModule> | undefined;

export function loadNlopt(): Promise<NloptModule> {
  loading ??= load();
  return loading;
}

async function load(): Promise<NloptModule> {
  const isNode = typeof process !== 'undefined' && typeof process.listeners === 'function';
  const before = isNode
    ? { rejection: new Set(process.listeners('unhandledRejection')), exception: new Set(process.listeners('uncaughtException')) }
    : undefined;
  let memory: WebAssembly.Memory | undefined;
  const instantiate = WebAssembly.instantiate;
  const capture = (imports: unknown, exports: unknown) => {
    for (const group of [exports, ...Object.values((imports ?? {}) as Record<string, unknown>)]) {
      for (const value of Object.values((group ?? {}) as Record<string, unknown>)) {
        if (value instanceof WebAssembly.Memory) memory = value;
      }
    }
  };
  (WebAssembly as { instantiate: unknown }).instantiate = async function (source: unknown, imports?: unknown) {
    const result = await (instantiate as (s: unknown, i?: unknown) => Promise<unknown>)(source, imports);
    const instance = (result as { instance?: WebAssembly.Instance }).instance ?? (result as WebAssembly.Instance);
    capture(imports, instance.exports);
    return result;
  };
  let nlopt: NloptModule;
  try {
    const mod = (await import('nlopt-js')) as unknown as { default?: NloptModule };
    nlopt = (mod.default ?? mod) as NloptModule;
    await nlopt.ready;
  } finally {
    (WebAssembly as { instantiate: unknown }).instantiate = instantiate;
    if (before) {
      for (const l of process.listeners('unhandledRejection')) if (!before.rejection.has(l)) process.off('unhandledRejection', l);
      for (const l of process.listeners('uncaughtException')) if (!before.exception.has(l)) process.off('uncaughtException', l);
    }
  }
  if (memory) {
    const mem = memory;
    let view = new Float64Array(mem.buffer);
    Object.defineProperty(nlopt, 'HEAPF64', {
      configurable: true,
      get() {
        if (view.buffer !== mem.buffer) view = new Float64Array(mem.buffer);
        return view;
      },
    });
  }
  return nlopt;
}

// ---------------------------------------------------------------------------------------------
// The trampolines and the slot they read.

class StopSignal extends Error {
  constructor() {
    super('pronk: optimizer stop');
  }
}

interface Slot {
  problem: Problem;
  control: RunControl;
  evaluations: number;
  started: number;
  best: { x: number[]; value: number; feasible: boolean } | null;
  lastX: number[];
  lastConstraints: number[];
  reason: StopReason | null;
  error: unknown;
  trace: TracePoint[];
  traceEvery: number;
  firstValue: number | null;
  flat: boolean;
  bestAt: number;
}

let slot: Slot | null = null;

function evaluate(x: number[]): number {
  const s = slot;
  if (!s) return 0; // a late call from a finished run: answer and let it wind down
  if (s.reason !== null) throw new StopSignal();
  const p = s.problem;
  if (s.control.shouldStop?.()) {
    s.reason = 'cancelled';
    throw new StopSignal();
  }
  if (s.evaluations >= p.maxEvaluations) {
    s.reason = 'max_evaluations';
    throw new StopSignal();
  }
  if (p.maxTime_s && (performance.now() - s.started) / 1000 > p.maxTime_s) {
    s.reason = 'max_time';
    throw new StopSignal();
  }
  const point = Array.from(x);
  let value: number;
  let violations: number[];
  try {
    value = p.objective(point);
    violations = (p.constraints ?? []).map((c) => c(point));
  } catch (error) {
    s.error = error;
    s.reason = 'cancelled';
    throw new StopSignal();
  }
  s.evaluations++;
  s.lastX = point;
  s.lastConstraints = violations;
  const tol = p.constraintTolerance ?? 0;
  const feasible = violations.every((v) => v <= tol);
  // NaN is "worse than anything": NLopt would otherwise compare it arbitrarily.
  if (Number.isNaN(value)) value = Infinity;
  if (s.firstValue === null) s.firstValue = value;
  else if (!Object.is(value, s.firstValue)) s.flat = false;
  const b = s.best;
  if (!b || (feasible && !b.feasible) || (feasible === b.feasible && value < b.value)) {
    s.best = { x: point, value, feasible };
    s.bestAt = s.evaluations;
  }
  if (s.evaluations % s.traceEvery === 0 || s.evaluations === 1) {
    s.trace.push({ evaluation: s.evaluations, value, best: s.best!.value });
  }
  const every = s.control.progressEvery ?? 1;
  if (s.control.onProgress && s.evaluations % every === 0) {
    try {
      s.control.onProgress({ evaluations: s.evaluations, best: s.best!.value, x: s.best!.x });
    } catch (error) {
      // an error of ours, not NLopt's (every error that reaches NLopt's caller from here is ours)
      s.error = error;
      s.reason = 'cancelled';
      throw new StopSignal();
    }
  }
  if (p.stopValue !== undefined && s.best!.feasible && s.best!.value <= p.stopValue) s.reason = 'stop_value';
  return value;
}

const objectiveTrampoline = (x: number[]) => evaluate(x);

// The constraints were computed with the objective; NLopt asks for them at that same point
// (if it ever asks elsewhere, they are computed afresh).
const constraintTrampolines: ((x: number[]) => number)[] = [];
function constraintTrampoline(i: number): (x: number[]) => number {
  while (constraintTrampolines.length <= i) {
    const k = constraintTrampolines.length;
    constraintTrampolines.push((x: number[]) => {
      const s = slot;
      if (!s || s.reason !== null) return 0;
      const same = s.lastX.length === x.length && s.lastX.every((v, j) => v === x[j]);
      if (same) return s.lastConstraints[k];
      try {
        return s.problem.constraints![k](Array.from(x));
      } catch (error) {
        s.error = error;
        s.reason = 'cancelled';
        throw new StopSignal();
      }
    });
  }
  return constraintTrampolines[i];
}

// Whether this module instance's random stream has been seeded yet (see Problem.seed).
let streamSeeded = false;
// Methods that draw from NLopt's random stream (nlopt_urand): the global ones, and PRAXIS, whose
// random steps out of resolution valleys (Brent 1973) NLopt's praxis.c takes from the same stream.
const STOCHASTIC: ReadonlySet<MethodName> = new Set(['CRS2_LM', 'ISRES', 'ESCH', 'MLSL', 'PRAXIS']);

/**
 * Whether a run of this method (with this local method) draws random numbers: such a run gives one
 * result per seed only in a fresh module instance (see Problem.seed). The other methods are
 * deterministic given x0, so one module may run many of them in turn.
 */
export function drawsRandomNumbers(method: MethodName, localMethod?: MethodName): boolean {
  return STOCHASTIC.has(method) || (localMethod !== undefined && STOCHASTIC.has(localMethod));
}

// ---------------------------------------------------------------------------------------------
// Validation (NLopt's own errors are bare strings) and the run.

export function validateProblem(p: Problem): void {
  const n = p.x0.length;
  const fail = (msg: string) => {
    throw new OptimizerInputError(msg);
  };
  const info = METHODS[p.method];
  if (!info) fail(`unknown method ${JSON.stringify(p.method)}; expected one of ${Object.keys(METHODS).join(', ')}`);
  if (n < 1) fail('at least one free parameter is needed');
  if (p.lower.length !== n || p.upper.length !== n) fail(`bounds hold ${p.lower.length} and ${p.upper.length} values, expected ${n}`);
  for (let i = 0; i < n; i++) {
    if (!Number.isFinite(p.lower[i]) || !Number.isFinite(p.upper[i]) || !(p.lower[i] < p.upper[i])) {
      fail(`parameter ${i}: bounds must be finite with lower < upper, found [${p.lower[i]}, ${p.upper[i]}]`);
    }
    if (!(p.x0[i] >= p.lower[i] && p.x0[i] <= p.upper[i])) fail(`parameter ${i}: start ${p.x0[i]} is outside [${p.lower[i]}, ${p.upper[i]}]`);
  }
  const constrained = (p.constraints?.length ?? 0) > 0;
  if (constrained && !info.constraints) {
    fail(`${p.method} cannot take constraints; use COBYLA, ISRES or AUGLAG, or handle them as a penalty`);
  }
  if (info.needsLocal) {
    const local = p.localMethod ? METHODS[p.localMethod] : undefined;
    if (!local) fail(`${p.method} needs a local method (localMethod), e.g. COBYLA or BOBYQA`);
    else if (local.needsLocal || local.global) fail(`${p.method}'s local method must be a local method, found ${p.localMethod}`);
    else if (constrained && p.method === 'MLSL') fail('MLSL cannot take constraints');
  }
  if (!Number.isInteger(p.maxEvaluations) || p.maxEvaluations < 1) fail(`maxEvaluations must be a positive integer, found ${p.maxEvaluations}`);
}

/** Minimize a problem. Same problem, same result: NLopt's methods here are deterministic given x0. */
export async function minimize(problem: Problem, control: RunControl = {}): Promise<Outcome> {
  validateProblem(problem);
  if (slot) throw new Error('one NLopt run at a time in a thread (use the worker pool for parallel runs)');
  const nlopt = await loadNlopt();
  const n = problem.x0.length;
  const info = METHODS[problem.method];
  const algorithm = (name: string) => {
    const a = nlopt.Algorithm[name];
    if (a === undefined) throw new OptimizerInputError(`this NLopt build lacks ${name}`);
    return a;
  };
  const s: Slot = {
    problem,
    control,
    evaluations: 0,
    started: performance.now(),
    best: null,
    lastX: [],
    lastConstraints: [],
    reason: null,
    error: undefined,
    trace: [],
    traceEvery: Math.max(1, Math.ceil(problem.maxEvaluations / 2000)),
    firstValue: null,
    flat: true,
    bestAt: 0,
  };
  slot = s;
  let final = { x: problem.x0.slice(), value: NaN };
  let reproducible = true;
  try {
    const opt = new nlopt.Optimize(algorithm(info.algorithm), n);
    opt.setLowerBounds(problem.lower);
    opt.setUpperBounds(problem.upper);
    const xtol = problem.xtolRel ?? 1e-6;
    opt.setMinObjective(objectiveTrampoline, xtol);
    if (info.needsLocal) {
      const local = new nlopt.Optimize(algorithm(METHODS[problem.localMethod!].algorithm), n);
      local.setLowerBounds(problem.lower);
      local.setUpperBounds(problem.upper);
      local.setMinObjective(objectiveTrampoline, xtol);
      opt.setLocalOptimizer(local);
    }
    (problem.constraints ?? []).forEach((_c, i) =>
      opt.addInequalityConstraint(constraintTrampoline(i), problem.constraintTolerance ?? 1e-8),
    );
    // NLopt's own budget is a backstop; the trampoline enforces the exact one.
    opt.setMaxeval(problem.maxEvaluations + 1);
    if (problem.maxTime_s) opt.setMaxtime(problem.maxTime_s + 1);
    // NLopt seeds its random stream at the first nlopt_optimize of a module instance, whatever the
    // method: the first run sees the seeded clock, and a stochastic run after any other run in the
    // same instance continues a stream it does not own.
    const stochastic = drawsRandomNumbers(problem.method, info.needsLocal ? problem.localMethod : undefined);
    const seedClock = !streamSeeded;
    reproducible = !stochastic || seedClock;
    const clock = Date.now;
    if (seedClock) {
      // NLopt's seed is gettimeofday's sec ^ usec: give it a clock made from the seed.
      const seedMs = 1000 * seedToClock(problem.seed ?? 0) + 1;
      Date.now = () => seedMs;
      streamSeeded = true;
    }
    try {
      const r = opt.optimize(problem.x0.slice());
      final = { x: Array.from(r.x), value: r.value };
    } catch (error) {
      // NLopt ends a run it cannot go on with (round-off limits its progress, a failure of the
      // method) by a C++ exception, which this build cannot catch: the run is over, and the points
      // it evaluated stand. Errors of the objective, the constraints and the progress callback
      // arrive as StopSignal with s.error set; a failure before any evaluation is not a search
      // that stopped.
      if (!(error instanceof StopSignal) && s.evaluations > 0 && s.reason === null && s.error === undefined) {
        s.reason = 'method_failed';
      } else if (!(error instanceof StopSignal)) {
        throw new Error(`NLopt failed: ${error instanceof Error ? error.message : String(error)}`);
      }
    } finally {
      Date.now = clock;
    }
  } finally {
    slot = null;
    nlopt.GC.flush();
  }
  if (s.error !== undefined) throw s.error;
  const best = s.best ?? { x: problem.x0.slice(), value: Infinity, feasible: false };
  // the last evaluation closes the trace (none when nothing was evaluated: no point without a value)
  if (s.evaluations > 0 && s.trace[s.trace.length - 1].evaluation !== s.evaluations) {
    s.trace.push({ evaluation: s.evaluations, value: Number.isFinite(final.value) ? final.value : best.value, best: best.value });
  }
  return {
    x: best.x,
    value: best.value,
    feasible: best.feasible,
    evaluations: s.evaluations,
    reason: s.reason ?? 'converged',
    final,
    trace: s.trace,
    reproducible,
    firstValue: s.firstValue,
    flat: s.evaluations > 1 && s.flat,
    bestAt: s.bestAt,
  };
}

/** NLopt's seed as the seconds of the clock it reads: seed mod 2^31 (exact for every integer seed). */
export function seedToClock(seed: number): number {
  const n = Math.abs(Math.trunc(seed));
  return Number.isSafeInteger(n) ? n % 2 ** 31 : Number(BigInt(n) % 2n ** 31n);
}
