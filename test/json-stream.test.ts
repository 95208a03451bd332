// Large JSON outputs written in pieces. Before, `pronk simulate --strides 1000000 --json` (the
// documented maximum) built the whole text as one string and exited 1 with "Invalid string
// length" (V8 caps a string at about 2^29 characters; that output is about 983 MB). The pieces must
// join to exactly what JSON.stringify(value, null, 2) writes, so normal outputs stay byte for byte.
import { afterAll, describe, expect, it } from 'vitest';
import { main } from '../src/cli/main.js';
import { writeChunks } from '../src/cli/stream-output.js';
import { jsonText, jsonTextChunks } from '../src/core/json-output.js';
import { jsonChunks } from '../src/core/json-stream.js';
import { closeWorkerPool } from '../src/worker/pool.js';

afterAll(() => closeWorkerPool());

// A small seeded generator (mulberry32, common practice) for random JSON-like values.
function random(seed: number) {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

function randomValue(next: () => number, depth: number): unknown {
  const r = next();
  if (depth <= 0 || r < 0.35) {
    const leaves = [0, -0, 1.5e-300, -2.5e300, Number.NaN, Number.POSITIVE_INFINITY, null, true, false, '', 'a "quoted"\nline', '\u2028', undefined, () => 1, 'é'];
    return next() < 0.5 ? leaves[Math.floor(next() * leaves.length)] : next() * 1e6 - 5e5;
  }
  if (r < 0.65) {
    const large = next() < 0.2;
    const length = large ? 300 + Math.floor(next() * 300) : Math.floor(next() * 5);
    return Array.from({ length }, () => randomValue(next, large ? Math.min(1, depth - 1) : depth - 1));
  }
  const out: Record<string, unknown> = {};
  const keys = Math.floor(next() * 6);
  for (let i = 0; i < keys; i++) out[`k${i}${next() < 0.1 ? '"\\' : ''}`] = randomValue(next, depth - 1);
  return out;
}

describe('jsonChunks joins to JSON.stringify(value, null, 2) exactly', () => {
  it('on 300 seeded random values with large arrays, undefined, functions, NaN and escapes', () => {
    const next = random(9);
    for (let i = 0; i < 300; i++) {
      const value = [randomValue(next, 4), { inner: randomValue(next, 4) }][i % 2];
      if (value === undefined || typeof value === 'function') continue; // JSON.stringify gives no text at all
      expect([...jsonChunks(value)].join('')).toBe(JSON.stringify(value, null, 2));
    }
  });

  it('on toJSON, empty containers and large arrays of objects, arrays and numbers', () => {
    const value = {
      when: new Date(0),
      custom: { toJSON: (key: string) => ({ key, rows: Array.from({ length: 400 }, (_, i) => i) }) },
      empty: { list: [], object: {}, gone: undefined },
      rows: Array.from({ length: 1000 }, (_, i) => ({ i, xs: [i, i / 3], nested: i % 100 === 0 ? Array.from({ length: 500 }, () => i) : [] })),
      table: Array.from({ length: 300 }, (_, i) => [i, { y: -i }]),
    };
    const chunks = [...jsonChunks(value)];
    expect(chunks.length).toBeGreaterThan(1);
    expect(chunks.join('')).toBe(JSON.stringify(value, null, 2));
  });

  it('jsonTextChunks is jsonText in pieces', () => {
    const result = { apexes: Array.from({ length: 2000 }, (_, i) => ({ height_m: 1 + i * 1e-9, time_s: i * 0.3 })), energy_J: 1784.8 };
    expect([...jsonTextChunks('simulate', result)].join('')).toBe(jsonText('simulate', result));
  });
});

describe('pronk simulate --json writes in pieces', () => {
  const scenario = {
    body: { mass_kg: 80, leg_length_m: 1, leg_stiffness_N_per_m: 20000, gravity_m_per_s2: 9.81 },
    start: { apex_height_m: 1, forward_speed_m_per_s: 5 },
    // Seyfarth, Geyer, Herr 2003's human-like body with swing-leg retraction: a gait stable on flat ground
    policy: { angle: { kind: 'retraction', attack_at_apex_deg: 62, rate_deg_per_s: 50 } },
    terrain: { kind: 'flat' },
    strides: 5,
  };

  it('20 000 strides: no write larger than about 1 MiB, and the text is jsonText of the result exactly', async () => {
    const { writeFileSync, mkdtempSync } = await import('node:fs');
    const { tmpdir } = await import('node:os');
    const { join } = await import('node:path');
    const file = join(mkdtempSync(join(tmpdir(), 'pronk-stream-')), 'robot.json');
    writeFileSync(file, JSON.stringify(scenario));
    const writes: number[] = [];
    let stdout = '';
    const code = await main(['simulate', file, '--strides', '20000', '--json'], {
      stdout: { write: (c: string) => { writes.push(c.length); stdout += c; return true; } },
      stderr: { write: () => true },
      env: {},
    });
    expect(code).toBe(0);
    expect(stdout.length).toBeGreaterThan(8e6); // about 19.6 MB: before, in one write
    expect(Math.max(...writes)).toBeLessThan((1 << 20) + (1 << 17));
    const parsed = JSON.parse(stdout);
    expect(parsed.strides).toHaveLength(20000);
    expect(`${JSON.stringify(parsed, null, 2)}\n`).toBe(stdout); // numbers survive a JSON round trip exactly
  }, 60_000);

  it('waits for drain when the stream says its buffer is full', async () => {
    const events: string[] = [];
    let drain: (() => void) | undefined;
    const stream = {
      write: (c: string) => {
        events.push(`write ${c.length}`);
        return false;
      },
      once: (_event: 'drain', listener: () => void) => {
        drain = listener;
      },
    };
    const done = writeChunks(stream, ['x'.repeat(1 << 20), 'y'.repeat(10)]);
    await new Promise((resolve) => setTimeout(resolve, 10));
    expect(events).toEqual([`write ${1 << 20}`]); // held until the stream drains
    drain?.();
    await new Promise((resolve) => setTimeout(resolve, 10));
    drain?.();
    await done;
    expect(events).toEqual([`write ${1 << 20}`, 'write 10']);
  });
});
