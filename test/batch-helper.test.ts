// Splitting a search thread's batches with a helper thread: the same summaries as one call, a
// helper that does not answer is abandoned with the same result, and nothing is split while every
// thread is busy.
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { pathToFileURL } from 'node:url';
import { describe, expect, it } from 'vitest';
import * as L from '../assembly/layout.js';
import { loadEngine, rolloutInput } from '../src/core/engine.js';
import { buildModel } from '../src/core/model.js';
import { parseStudy } from '../src/core/optimize/study.js';
import { activityBuffer, SplitEngine } from '../src/worker/batch-helper.js';
import { optimizeStudy } from '../src/worker/node-optimize.js';
import { scenario } from './helpers.js';

function batch() {
  const s = scenario({ terrain: { kind: 'random_walk', sigma_m: 0.004, seed: 5 }, policy: { angle: { kind: 'retraction', attack_at_apex_deg: 62, rate_deg_per_s: 50 } } });
  const n = 301;
  const inputs = new Float64Array(n * L.I_SIZE);
  for (let r = 0; r < n; r++) inputs.set(rolloutInput(0.95 + 0.0005 * r, 5, r), r * L.I_SIZE);
  return { model: buildModel(s), inputs, strides: 10 };
}

const same = (a: Float64Array, b: Float64Array) => Buffer.from(a.buffer, a.byteOffset, a.byteLength).equals(Buffer.from(b.buffer, b.byteOffset, b.byteLength));

/** Runs batches until the helper has answered one (it loads on the first spare call). */
async function untilSplit(split: SplitEngine, req: ReturnType<typeof batch>) {
  for (let i = 0; i < 200 && split.answered === 0; i++) {
    split.runBatch(req);
    await new Promise((r) => setTimeout(r, 20));
  }
}

describe('SplitEngine', () => {
  it('gives the bytes of one call when a core is spare, and does not split when none is', async () => {
    const engine = await loadEngine();
    const req = batch();
    const one = engine.runBatch(req);
    const activity = activityBuffer(2); // 0 jobs running of 2 threads: spare
    const split = new SplitEngine(engine, activity);
    try {
      await untilSplit(split, req);
      expect(split.answered).toBeGreaterThan(0);
      const r = split.runBatch(req);
      expect(r.completed).toBe(one.completed);
      expect(same(r.summaries, one.summaries)).toBe(true);
      const before = split.splits;
      Atomics.store(new Int32Array(activity), 0, 2); // every thread busy
      expect(same(split.runBatch(req).summaries, one.summaries)).toBe(true);
      expect(split.splits).toBe(before);
    } finally {
      await split.close();
    }
  });

  it('abandons a helper that never answers and runs its half itself, to the same bytes', async () => {
    const engine = await loadEngine();
    const req = batch();
    const one = engine.runBatch(req);
    const dir = mkdtempSync(join(tmpdir(), 'pronk-helper-'));
    const silent = join(dir, 'silent.mjs');
    // loads, says it is ready, and never answers a job
    writeFileSync(silent, "import { workerData, parentPort } from 'node:worker_threads';\nAtomics.store(new Int32Array(workerData.ready), 0, 1);\nparentPort.on('message', () => {});\n");
    const split = new SplitEngine(engine, activityBuffer(2), pathToFileURL(silent));
    try {
      for (let i = 0; i < 200 && split.splits === 0; i++) {
        const r = split.runBatch(req);
        expect(same(r.summaries, one.summaries)).toBe(true);
        await new Promise((r) => setTimeout(r, 20));
      }
      expect(split.splits).toBe(1);
      expect(split.answered).toBe(0);
      expect(same(split.runBatch(req).summaries, one.summaries)).toBe(true);
      expect(split.splits).toBe(1); // abandoned: no more splits
    } finally {
      await split.close();
    }
  });
});

describe('a search with split batches', () => {
  it('gives the result of one without (timings aside), on 2 threads with 3 restarts (the last runs alone and splits)', async () => {
    // Seyfarth, Geyer & Herr 2003 (J. Exp. Biol. 206:2547–2555) body with retraction, as in test/search.test.ts
    const study = parseStudy({
      scenario: {
        body: { mass_kg: 80, leg_length_m: 1, leg_stiffness_N_per_m: 20000, gravity_m_per_s2: 9.81 },
        start: { apex_height_m: 1, forward_speed_m_per_s: 5 },
        policy: { angle: { kind: 'retraction', attack_at_apex_deg: 64, rate_deg_per_s: 30 } },
        strides: 10,
        integrator: { relative_tolerance: 1e-8, absolute_tolerance: 1e-10 },
      },
      free_parameters: [
        { path: 'policy.angle.attack_at_apex_deg', lower: 58, upper: 72 },
        { path: 'policy.angle.rate_deg_per_s', lower: 0, upper: 120 },
      ],
      objective: { terms: [{ kind: 'survival', terrain: 'random_walk', sigma_m: 0.01, rollouts: 200 }] },
      search: { method: 'COBYLA', max_evaluations: 20, restarts: 3 },
      seed: 3,
      holdout: { seed: 4, rollouts: 300 },
    });
    const timingsAside = (r: unknown) => JSON.stringify(r, (k, v) => (k === 'seconds' || k === 'date' || k === 'phase_seconds' ? undefined : v));
    const split = await optimizeStudy(study, { workers: 2 });
    const whole = await optimizeStudy(study, { workers: 2, splitBatches: false });
    expect(timingsAside(split)).toBe(timingsAside(whole));
  });
});
