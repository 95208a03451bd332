// The worker pool: results bit-identical to an in-process run for any number of workers.
import { afterAll, describe, expect, it } from 'vitest';
import * as L from '../assembly/layout.js';
import { rolloutInput } from '../src/core/engine.js';
import { buildModel } from '../src/core/model.js';
import { closeWorkerPool, runBatchParallel } from '../src/worker/pool.js';
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
    for (const workers of [2, 4]) {
      const many = await runBatchParallel(req, { workers, chunkRollouts: 17, onProgress: (done) => (progress = done) });
      expect(progress).toBe(n);
      expect(many.completed).toBe(one.completed);
      expect(Buffer.from(many.summaries.buffer).equals(Buffer.from(one.summaries.buffer))).toBe(true);
      expect(Buffer.from(many.records!.buffer).equals(Buffer.from(one.records!.buffer))).toBe(true);
    }
    expect(one.completed).toBeGreaterThan(0);
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
