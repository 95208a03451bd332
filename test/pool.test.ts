// The worker pool: results bit-identical to an in-process run for any number of workers.
import { afterAll, describe, expect, it } from 'vitest';
import * as L from '../assembly/layout.js';
import { rolloutInput } from '../src/core/engine.js';
import { buildModel } from '../src/core/model.js';
import { chunkPlan, closeWorkerPool, runBatchParallel } from '../src/worker/pool.js';
import { scenario } from './helpers.js';

afterAll(() => closeWorkerPool());

describe('runBatchParallel', () => {
  it('1, 2 and 4 workers give bit-identical summaries and records', async () => {
    const s = scenario({ terrain: { kind: 'random_walk', sigma_m: 0.004, seed: 11 }, policy: { angle: { kind: 'retraction', attack_at_apex_deg: 62, rate_deg_per_s: 50 } } });
    const n = 300;
    const inputs = new Float64Array(n * L.I_SIZE);
    for (let r = 0; r < n; r++) inputs.set(rolloutInput(0.95 + 0.001 * r, 5, r), r * L.I_SIZE);
    const req = { model: buildModel(s), inputs, strides: 8, records: true };
    const one = await runBatchParallel(req, { workers: 1 });
    let progress = 0;
    for (const [workers, chunkRollouts] of [[2, 17], [4, 17], [2, undefined], [3, undefined]]) {
      const many = await runBatchParallel(req, { workers, chunkRollouts, onProgress: (done) => (progress = done) });
      expect(progress).toBe(n);
      expect(many.completed).toBe(one.completed);
      expect(Buffer.from(many.summaries.buffer).equals(Buffer.from(one.summaries.buffer))).toBe(true);
      expect(Buffer.from(many.records!.buffer).equals(Buffer.from(one.records!.buffer))).toBe(true);
    }
    expect(one.completed).toBeGreaterThan(0);
  });

  it('the default chunks cover the batch in order, shrinking from the rest over 4 per worker to 1/64 per worker', () => {
    for (const [rollouts, workers] of [[10_000, 2], [1000, 8], [7, 2], [1, 4], [100_001, 3]]) {
      const chunks = chunkPlan(rollouts, workers);
      expect(chunks[0].start).toBe(0);
      expect(chunks[chunks.length - 1].end).toBe(rollouts);
      for (let i = 1; i < chunks.length; i++) {
        expect(chunks[i].start).toBe(chunks[i - 1].end); // contiguous, in order
        expect(chunks[i].end - chunks[i].start).toBeLessThanOrEqual(chunks[i - 1].end - chunks[i - 1].start);
      }
      // guided self-scheduling (Polychronopoulos and Kuck 1987): the first chunk is the batch over 4 x workers
      expect(chunks[0].end).toBe(Math.min(rollouts, Math.max(Math.ceil(rollouts / (64 * workers)), Math.ceil(rollouts / (4 * workers)))));
      for (const c of chunks.slice(0, -1)) expect(c.end - c.start).toBeGreaterThanOrEqual(Math.ceil(rollouts / (64 * workers)));
    }
    expect(chunkPlan(10, 2, 4).map((c) => c.end - c.start)).toEqual([4, 4, 2]);
  });

  it('an aborted signal stops the batch with a CancelledError', async () => {
    const s = scenario();
    const inputs = new Float64Array(50 * L.I_SIZE);
    for (let r = 0; r < 50; r++) inputs.set(rolloutInput(1, 5, r), r * L.I_SIZE);
    const ac = new AbortController();
    ac.abort();
    await expect(runBatchParallel({ model: buildModel(s), inputs, strides: 2 }, { workers: 2, signal: ac.signal })).rejects.toThrow('cancelled');
  });
});
