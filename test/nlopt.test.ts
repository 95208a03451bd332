// The NLopt wrapper against NLopt's own reference problems.
import { spawnSync } from 'node:child_process';
import { describe, expect, it } from 'vitest';
import { loadNlopt, minimize, validateProblem, type Problem } from '../src/core/optimize/nlopt.js';

// NLopt tutorial problem (S.G. Johnson, "NLopt Tutorial", NLopt documentation): minimize sqrt(x2)
// subject to x2 >= (a x1 + b)^3 for (a, b) = (2, 0) and (-1, 1); optimum x = (1/3, 8/27),
// f* = sqrt(8/27) = 0.5443310539518... (published; closed form).
const F_STAR = Math.sqrt(8 / 27);
const tutorial = (method: Problem['method'], extra: Partial<Problem> = {}): Problem => ({
  method,
  lower: [-10, 0],
  upper: [10, 10],
  x0: [1.234, 5.678],
  objective: (x) => Math.sqrt(x[1]),
  constraints: [(x) => (2 * x[0]) ** 3 - x[1], (x) => (-1 * x[0] + 1) ** 3 - x[1]],
  maxEvaluations: 20000,
  xtolRel: 1e-10,
  ...extra,
});
// Rosenbrock 1960, "An automatic method for finding the greatest or least value of a function",
// Comput. J. 3(3):175–184: minimum 0 at (1, 1) (published; closed form).
const rosenbrock = (method: Problem['method']): Problem => ({
  method,
  lower: [-2, -2],
  upper: [2, 2],
  x0: [-1.2, 1],
  objective: (x) => 100 * (x[1] - x[0] ** 2) ** 2 + (1 - x[0]) ** 2,
  maxEvaluations: 20000,
  xtolRel: 1e-12,
});

describe('NLopt wrapper', () => {
  it('checks its reference value: the tutorial optimum satisfies both constraints with equality', () => {
    const [x1, x2] = [1 / 3, 8 / 27];
    expect((2 * x1) ** 3 - x2).toBeCloseTo(0, 15);
    expect((1 - x1) ** 3 - x2).toBeCloseTo(0, 15);
    expect(F_STAR).toBeCloseTo(0.5443310539518, 12);
  });

  it('COBYLA reaches the tutorial optimum sqrt(8/27)', async () => {
    const r = await minimize(tutorial('COBYLA'));
    expect(r.feasible).toBe(true);
    expect(Math.abs(r.value - F_STAR)).toBeLessThan(1e-7);
    expect(Math.abs(r.x[0] - 1 / 3)).toBeLessThan(1e-6);
  });

  it('ISRES reaches the tutorial optimum within 1e-4', async () => {
    const r = await minimize(tutorial('ISRES', { seed: 42, constraintTolerance: 1e-8 }));
    expect(r.feasible).toBe(true);
    expect(Math.abs(r.value - F_STAR)).toBeLessThan(1e-4);
    // COBYLA ran first in this module: NLopt seeded its stream then, from the real clock
    expect(r.reproducible).toBe(false);
    expect(r.evaluations).toBe(20000);
    expect(r.reason).toBe('max_evaluations');
  });

  // NLopt seeds its random stream at the first nlopt_optimize of a module instance, of any method
  // (nlopt_srand_time_default in NLopt's optimize.c); PRAXIS draws from it too (praxis.c's random
  // steps). Each case runs in a fresh process, as a fresh worker would.
  it('a seed gives one result in a fresh module, for ISRES and PRAXIS; after another run it is flagged not reproducible', () => {
    const run = (methods: string[]) => {
      const script = `
        const { minimize } = await import(${JSON.stringify(new URL('../dist/src/core/optimize/nlopt.js', import.meta.url).href)});
        const problem = (method) => ({ method, lower: [-2, -2], upper: [2, 2], x0: [-1.2, 1], seed: 42, maxEvaluations: 300, xtolRel: 1e-12,
          objective: (x) => 100 * (x[1] - x[0] ** 2) ** 2 + (1 - x[0]) ** 2 });
        const out = [];
        for (const m of ${JSON.stringify(methods)}) { const r = await minimize(problem(m)); out.push({ x: r.x, reproducible: r.reproducible }); }
        process.stdout.write(JSON.stringify(out.at(-1)));`;
      const child = spawnSync(process.execPath, ['--input-type=module', '-e', script], { encoding: 'utf8', timeout: 60_000 });
      expect(child.status, child.stderr).toBe(0);
      return JSON.parse(child.stdout) as { x: number[]; reproducible: boolean };
    };
    for (const method of ['ISRES', 'PRAXIS']) {
      const a = run([method]);
      const b = run([method]);
      expect(a.reproducible).toBe(true);
      expect(b.x).toEqual(a.x);
      expect(run(['COBYLA', method]).reproducible).toBe(false);
    }
  });

  it('BOBYQA and Subplex reach Rosenbrock\'s (1, 1)', async () => {
    for (const method of ['BOBYQA', 'SUBPLEX'] as const) {
      const r = await minimize(rosenbrock(method));
      expect(Math.abs(r.x[0] - 1)).toBeLessThan(1e-4);
      expect(Math.abs(r.x[1] - 1)).toBeLessThan(1e-4);
      expect(r.value).toBeLessThan(1e-8);
    }
  });

  it('counts evaluations exactly, stops at the budget, and traces the best value', async () => {
    const r = await minimize({ ...rosenbrock('NELDER_MEAD'), maxEvaluations: 50 });
    expect(r.evaluations).toBe(50);
    expect(r.reason).toBe('max_evaluations');
    const bests = r.trace.map((t) => t.best);
    for (let i = 1; i < bests.length; i++) expect(bests[i]).toBeLessThanOrEqual(bests[i - 1]);
  });

  it('cancel stops a run; a thrown objective surfaces after the run, and the module keeps working', async () => {
    let calls = 0;
    const cancelled = await minimize({ ...rosenbrock('SUBPLEX'), maxEvaluations: 1e6 }, { shouldStop: () => ++calls > 30 });
    expect(cancelled.reason).toBe('cancelled');
    expect(cancelled.evaluations).toBe(30);
    await expect(
      minimize({ ...rosenbrock('COBYLA'), objective: (x) => { if (x[0] > -1.1) throw new Error('objective blew up'); return x[0] ** 2; } }),
    ).rejects.toThrow('objective blew up');
    const after = await minimize(tutorial('COBYLA'));
    expect(Math.abs(after.value - F_STAR)).toBeLessThan(1e-7);
  });

  it('keeps working after its heap grows past its first size (the cached-heap defect)', async () => {
    const nlopt = await loadNlopt();
    const big = new nlopt.Optimize(nlopt.Algorithm.LN_COBYLA, 3_000_000);
    big.setLowerBounds(new Array(3_000_000).fill(0)); // a 24 MB vector on NLopt's heap: it must grow
    nlopt.GC.flush();
    expect(nlopt.HEAPF64.buffer.byteLength).toBeGreaterThan(16 * 2 ** 20);
    const again = await minimize(tutorial('COBYLA'));
    expect(Math.abs(again.value - F_STAR)).toBeLessThan(1e-7);
  });

  it('refuses bad problems with a clear message before NLopt sees them', () => {
    expect(() => validateProblem({ ...rosenbrock('BOBYQA'), constraints: [(x) => x[0]] })).toThrow(/BOBYQA cannot take constraints/);
    expect(() => validateProblem({ ...rosenbrock('BOBYQA'), x0: [3, 0] })).toThrow(/outside/);
    expect(() => validateProblem({ ...rosenbrock('BOBYQA'), lower: [1, 1], upper: [0, 2] })).toThrow(/lower < upper/);
    expect(() => validateProblem({ ...rosenbrock('MLSL') })).toThrow(/needs a local method/);
    expect(() => validateProblem({ ...rosenbrock('NOPE' as Problem['method']) })).toThrow(/unknown method/);
  });

  it('leaves no process-wide handlers behind', async () => {
    await minimize(tutorial('COBYLA'));
    expect(process.listeners('unhandledRejection').filter((l) => !String(l).includes('vitest')).length).toBeLessThanOrEqual(1);
  });
});
