// The one engine loader for Node and the browser, and a thin typed wrapper over
// the kernel's pointer-only boundary (layouts in assembly/layout.ts).
//
// Ownership: every buffer lives in the kernel's bump arena, which is reset at
// the start of each call here; nothing handed back to callers points into WASM
// memory (results are copied out), so memory growth never invalidates them.

import * as L from '../../assembly/layout.js';

export interface KernelExports {
  memory: WebAssembly.Memory;
  layoutVersion(): number;
  arenaReset(): void;
  arenaAlloc(bytes: number): number;
  runBatch(model: number, inputs: number, rollouts: number, strides: number, records: number, summaries: number): number;
  traceRollout(
    model: number, input: number, strides: number, records: number, summary: number,
    samples: number, capacity: number, dt: number,
  ): number;
  terrainGaussian(seed: number, stream: number, index: number): number;
  rngUniform(seed: number, stream: number, counter: number): number;
  integrateArenstorf(mu: number, x0: number, vy0: number, tEnd: number, rtol: number, atol: number, out: number): void;
  runLateralBatch(models: number, inputs: number, rollouts: number, strides: number, records: number, summaries: number): number;
  traceLateralRollout(
    model: number, input: number, strides: number, records: number, summary: number,
    samples: number, capacity: number, dt: number,
  ): number;
  /** Rollouts runBatch steps together: 4 (default), 2 or 1; the results are the same bytes. */
  batchLanes(n: number): void;
  /** Steps the last runBatch took in pairs. */
  batchPairedSteps(): number;
}

/** A batch of lateral leg-spring rollouts (layouts LM_ / LI_ / LR_ / LS_ in assembly/layout.ts). */
export interface LateralBatchResult {
  rollouts: number;
  strides: number;
  /** (rollouts x LS_SIZE) f64. */
  summaries: Float64Array;
  /** (rollouts x strides x LR_SIZE) f64 when requested. */
  records?: Float64Array;
  completed: number;
}

/** One lateral rollout with samples (samples x LT_SIZE), records (strides x LR_SIZE), summary (LS_SIZE). */
export interface LateralTraceResult {
  samples: Float64Array;
  records: Float64Array;
  summary: Float64Array;
  truncated: boolean;
}

/** A compiled model: the (M_SIZE) block plus the tables it points into. */
export interface ModelBlock {
  /** (M_SIZE) f64; table pointer fields are filled in by the engine. */
  fields: Float64Array;
  angleTimes?: Float64Array;
  angleValues?: Float64Array;
  stiffnessTimes?: Float64Array;
  stiffnessCompression?: Float64Array;
  stiffnessExtension?: Float64Array;
  groundHeights?: Float64Array;
}

export interface BatchRequest {
  /** One model for every rollout, or several picked per rollout by I_MODEL. */
  model: ModelBlock | readonly ModelBlock[];
  /** (rollouts x I_SIZE) f64, see I_* in layout.ts. */
  inputs: Float64Array;
  strides: number;
  /** Keep the per-stride records (rollouts x strides x R_SIZE). */
  records?: boolean;
}

export interface BatchResult {
  rollouts: number;
  strides: number;
  /** (rollouts x S_SIZE) f64, see S_* in layout.ts. Copied out of WASM memory. */
  summaries: Float64Array;
  /** (rollouts x strides x R_SIZE) f64 when requested, else undefined. Copied. */
  records?: Float64Array;
  completed: number;
}

export interface TraceResult {
  /** (samples x T_SIZE) f64, see T_* in layout.ts. */
  samples: Float64Array;
  /** (strides x R_SIZE) f64. */
  records: Float64Array;
  /** (S_SIZE) f64. */
  summary: Float64Array;
  /** The sample buffer filled up before the rollout ended. */
  truncated: boolean;
}

export class EngineError extends Error {}

let kernelPromise: Promise<Engine> | undefined;

/** Load (once) and return the engine. Works in Node (file: URL) and browsers (fetch). */
export function loadEngine(): Promise<Engine> {
  kernelPromise ??= instantiate().then((k) => new Engine(k));
  return kernelPromise;
}

async function instantiate(): Promise<KernelExports> {
  const url = new URL('../../build/pronk.wasm', import.meta.url);
  let module: WebAssembly.Module;
  if (url.protocol === 'file:') {
    const fsName = 'node:fs/promises';
    const fs = (await import(/* @vite-ignore */ fsName)) as typeof import('node:fs/promises');
    let bytes: Uint8Array;
    try {
      bytes = await fs.readFile(url);
    } catch {
      throw new EngineError(`the WASM kernel is missing at ${url.pathname}; run "npm run build" first`);
    }
    module = await WebAssembly.compile(bytes as BufferSource);
  } else {
    module = await WebAssembly.compileStreaming(fetch(url));
  }
  const instance = await WebAssembly.instantiate(module, {});
  const k = instance.exports as unknown as KernelExports;
  if (k.layoutVersion() !== L.LAYOUT_VERSION) {
    throw new EngineError(
      `WASM kernel layout ${k.layoutVersion()} does not match the TypeScript layout ${L.LAYOUT_VERSION}; rebuild`,
    );
  }
  return k;
}

const BYTES = 8;
/** Largest allocation the 32-bit address space holds, bytes. */
const MAX_ALLOC_BYTES = 2 ** 32 - 2 ** 16;

export class Engine {
  constructor(readonly kernel: KernelExports) {}

  private alloc(count: number): number {
    // the kernel takes a 32-bit byte count: a larger one would wrap to a small allocation that the
    // kernel then writes past
    if (!(count * BYTES <= MAX_ALLOC_BYTES)) throw new EngineError(`out of WASM memory allocating ${count} values (more than 4 GiB)`);
    const p = this.kernel.arenaAlloc(count * BYTES) >>> 0;
    if (p === 0) throw new EngineError(`out of WASM memory allocating ${count} values`);
    return p;
  }

  private put(values: Float64Array): number {
    const p = this.alloc(Math.max(values.length, 1));
    new Float64Array(this.kernel.memory.buffer, p, values.length).set(values);
    return p;
  }

  private view(ptr: number, count: number): Float64Array {
    return new Float64Array(this.kernel.memory.buffer, ptr, count);
  }

  /**
   * Copy the models and their tables into the arena; returns the (models x M_SIZE) pointer. A table
   * shared by several models (the same array) is placed once: the kernel only reads it.
   */
  private placeModels(models: readonly ModelBlock[]): number {
    const all = new Float64Array(models.length * L.M_SIZE);
    const placed = new Map<Float64Array, number>();
    models.forEach((model, i) => {
      if (model.fields.length !== L.M_SIZE) {
        throw new EngineError(`model block ${i} has ${model.fields.length} fields, expected ${L.M_SIZE}`);
      }
      const fields = all.subarray(i * L.M_SIZE, (i + 1) * L.M_SIZE);
      fields.set(model.fields);
      const table = (arr: Float64Array | undefined, ptrField: number) => {
        if (!arr) return;
        let ptr = placed.get(arr);
        if (ptr === undefined) {
          ptr = this.put(arr);
          placed.set(arr, ptr);
        }
        fields[ptrField] = ptr;
      };
      table(model.angleTimes, L.M_ANGLE_TABLE_T);
      table(model.angleValues, L.M_ANGLE_TABLE_A);
      table(model.stiffnessTimes, L.M_STIFFNESS_TABLE_T);
      table(model.stiffnessCompression, L.M_STIFFNESS_TABLE_KC);
      table(model.stiffnessExtension, L.M_STIFFNESS_TABLE_KE);
      table(model.groundHeights, L.M_STEPS_PTR);
    });
    return this.put(all);
  }

  /**
   * Many rollouts x many strides in one kernel call. With `into`, the summaries are copied out of
   * WASM memory straight into `into.summaries` from value `into.offset` on (a batch's chunks into
   * the whole batch's array), and the result's summaries are that part of it: no array of their own.
   */
  runBatch(req: BatchRequest, into?: { summaries: Float64Array; offset: number }): BatchResult {
    const rollouts = req.inputs.length / L.I_SIZE;
    if (!Number.isInteger(rollouts) || rollouts < 1) {
      throw new EngineError(`inputs hold ${req.inputs.length} values, expected a positive multiple of ${L.I_SIZE}`);
    }
    if (!Number.isInteger(req.strides) || req.strides < 1) {
      throw new EngineError(`strides must be a positive integer, found ${req.strides}`);
    }
    const models = Array.isArray(req.model) ? (req.model as readonly ModelBlock[]) : [req.model as ModelBlock];
    if (models.length < 1) throw new EngineError('a batch needs at least one model');
    for (let r = 0; r < rollouts; r++) {
      const m = req.inputs[r * L.I_SIZE + L.I_MODEL];
      if (!Number.isInteger(m) || m < 0 || m >= models.length) {
        throw new EngineError(`rollout ${r} picks model ${m}, expected an integer from 0 to ${models.length - 1}`);
      }
    }
    const k = this.kernel;
    k.arenaReset();
    const model = this.placeModels(models);
    const inputs = this.put(req.inputs);
    const nRecords = req.records ? rollouts * req.strides * L.R_SIZE : 0;
    const records = nRecords > 0 ? this.alloc(nRecords) : 0;
    const summaries = this.alloc(rollouts * L.S_SIZE);
    const completed = k.runBatch(model, inputs, rollouts, req.strides, records, summaries);
    let out: Float64Array;
    if (into) {
      out = into.summaries.subarray(into.offset, into.offset + rollouts * L.S_SIZE);
      if (out.length !== rollouts * L.S_SIZE) throw new EngineError(`the summaries' destination holds ${out.length} values from ${into.offset}, expected ${rollouts * L.S_SIZE}`);
      out.set(this.view(summaries, rollouts * L.S_SIZE));
    } else {
      out = this.view(summaries, rollouts * L.S_SIZE).slice();
    }
    return {
      rollouts,
      strides: req.strides,
      completed,
      summaries: out,
      records: nRecords > 0 ? this.view(records, nRecords).slice() : undefined,
    };
  }

  /** One rollout with trajectory samples every dt seconds, for plots and animation. */
  trace(model: ModelBlock, input: Float64Array, strides: number, dt: number, capacity = 200_000): TraceResult {
    if (input.length !== L.I_SIZE) throw new EngineError(`trace input holds ${input.length} values, expected ${L.I_SIZE}`);
    if (!(dt > 0)) throw new EngineError(`trace interval must be > 0 s, found ${dt}`);
    const k = this.kernel;
    k.arenaReset();
    const m = this.placeModels([model]);
    const inp = this.put(input);
    const records = this.alloc(strides * L.R_SIZE);
    const summary = this.alloc(L.S_SIZE);
    const samples = this.alloc(capacity * L.T_SIZE);
    const n = k.traceRollout(m, inp, strides, records, summary, samples, capacity, dt);
    return {
      samples: this.view(samples, n * L.T_SIZE).slice(),
      records: this.view(records, strides * L.R_SIZE).slice(),
      summary: this.view(summary, L.S_SIZE).slice(),
      truncated: n >= capacity,
    };
  }

  /** Lateral leg-spring rollouts: each input row (LI_SIZE) picks its model block (LM_SIZE) by LI_MODEL. */
  runLateral(models: readonly Float64Array[], inputs: Float64Array, strides: number, records = false): LateralBatchResult {
    const rollouts = inputs.length / L.LI_SIZE;
    if (!Number.isInteger(rollouts) || rollouts < 1) {
      throw new EngineError(`inputs hold ${inputs.length} values, expected a positive multiple of ${L.LI_SIZE}`);
    }
    if (!Number.isInteger(strides) || strides < 1) throw new EngineError(`strides must be a positive integer, found ${strides}`);
    if (models.length < 1) throw new EngineError('a batch needs at least one model');
    const all = new Float64Array(models.length * L.LM_SIZE);
    models.forEach((m, i) => {
      if (m.length !== L.LM_SIZE) throw new EngineError(`lateral model block ${i} has ${m.length} fields, expected ${L.LM_SIZE}`);
      all.set(m, i * L.LM_SIZE);
    });
    for (let r = 0; r < rollouts; r++) {
      const m = inputs[r * L.LI_SIZE + L.LI_MODEL];
      if (!Number.isInteger(m) || m < 0 || m >= models.length) {
        throw new EngineError(`rollout ${r} picks model ${m}, expected an integer from 0 to ${models.length - 1}`);
      }
    }
    const k = this.kernel;
    k.arenaReset();
    const mp = this.put(all);
    const ip = this.put(inputs);
    const nRecords = records ? rollouts * strides * L.LR_SIZE : 0;
    const rp = nRecords > 0 ? this.alloc(nRecords) : 0;
    const sp = this.alloc(rollouts * L.LS_SIZE);
    const completed = k.runLateralBatch(mp, ip, rollouts, strides, rp, sp);
    return {
      rollouts,
      strides,
      completed,
      summaries: this.view(sp, rollouts * L.LS_SIZE).slice(),
      records: nRecords > 0 ? this.view(rp, nRecords).slice() : undefined,
    };
  }

  /** One lateral rollout with samples every dt seconds. */
  traceLateral(model: Float64Array, input: Float64Array, strides: number, dt: number, capacity = 200_000): LateralTraceResult {
    if (model.length !== L.LM_SIZE) throw new EngineError(`lateral model block has ${model.length} fields, expected ${L.LM_SIZE}`);
    if (input.length !== L.LI_SIZE) throw new EngineError(`lateral input holds ${input.length} values, expected ${L.LI_SIZE}`);
    if (!(dt > 0)) throw new EngineError(`trace interval must be > 0 s, found ${dt}`);
    const k = this.kernel;
    k.arenaReset();
    const mp = this.put(model);
    const ip = this.put(input);
    const records = this.alloc(strides * L.LR_SIZE);
    const summary = this.alloc(L.LS_SIZE);
    const samples = this.alloc(capacity * L.LT_SIZE);
    const n = k.traceLateralRollout(mp, ip, strides, records, summary, samples, capacity, dt);
    return {
      samples: this.view(samples, n * L.LT_SIZE).slice(),
      records: this.view(records, strides * L.LR_SIZE).slice(),
      summary: this.view(summary, L.LS_SIZE).slice(),
      truncated: n >= capacity,
    };
  }

  /** Uniform draw in (0, 1), number `counter` of stream `stream` of `seed` (counter-based: rng.ts). */
  uniform(seed: number, stream: number, counter: number): number {
    return this.kernel.rngUniform(seed, stream, counter);
  }

  /** Standard-normal draw `index` of terrain stream `stream` (for checks). */
  terrainGaussian(seed: number, stream: number, index: number): number {
    return this.kernel.terrainGaussian(seed, stream, index);
  }

  /** The kernel's stepper alone on the Arenstorf orbit (for checks). */
  arenstorf(mu: number, x0: number, vy0: number, tEnd: number, rtol: number, atol: number) {
    const k = this.kernel;
    k.arenaReset();
    const out = this.alloc(6);
    k.integrateArenstorf(mu, x0, vy0, tEnd, rtol, atol, out);
    const v = this.view(out, 6);
    return { x: v[0], y: v[1], vx: v[2], vy: v[3], steps: v[4], rejected: v[5] };
  }
}

/** A rollout input row (I_SIZE) with nominal body scales. */
export function rolloutInput(apexHeight: number, forwardSpeed: number, stream = 0, model = 0): Float64Array {
  const v = new Float64Array(L.I_SIZE);
  v[L.I_APEX_HEIGHT] = apexHeight;
  v[L.I_FORWARD_SPEED] = forwardSpeed;
  v[L.I_STREAM] = stream;
  v[L.I_MASS_SCALE] = 1;
  v[L.I_STIFFNESS_SCALE] = 1;
  v[L.I_LEG_SCALE] = 1;
  v[L.I_MODEL] = model;
  return v;
}
