// The workbench's stored form of big results: long arrays as JSON slices, written and read a slice
// per task; the round trip gives back an equal value.
import { describe, expect, it } from 'vitest';
import { packForStorage, SLICE_AT, unpackFromStorage } from '../../src/ui/lib/persist.js';

describe('stored results', () => {
  it('a basin-like result with a long array of cells comes back equal, non-finite numbers and nulls included', async () => {
    const cells = Array.from({ length: 3 * SLICE_AT + 7 }, (_, i) => ({
      apex_height_m: 0.9 + i * 1e-5,
      forward_speed_m_per_s: i % 11 === 0 ? null : 5 - i * 1e-4,
      outcome: i % 3 === 0 ? 'fell' : 'converged',
      failed_stride: i % 3 === 0 ? i % 30 : null,
      last_apex: i % 3 === 0 ? null : { height_m: 0.96, forward_speed_m_per_s: 5.06 },
      change: i === 5 ? Number.NaN : i === 6 ? Number.POSITIVE_INFINITY : i === 7 ? Number.NEGATIVE_INFINITY : -0.5,
    }));
    const stamp = { value: { mode: 'grid', cells, counts: { cells: cells.length } }, scenarioKey: '{}', at: 1, seconds: 2, options: { strides: 30 } };
    const packed = (await packForStorage(stamp)) as { value: { cells: unknown } };
    // the cells are stored as text slices, the rest as it is; the value itself is not changed
    expect(Array.isArray(packed.value.cells)).toBe(false);
    expect(JSON.stringify(packed).length).toBeGreaterThan(0);
    expect(stamp.value.cells).toBe(cells);
    const back = await unpackFromStorage(packed);
    expect(back).toEqual(stamp);
    const backCells = (back as typeof stamp).value.cells;
    expect(Number.isNaN(backCells[5].change)).toBe(true);
    expect(backCells[6].change).toBe(Number.POSITIVE_INFINITY);
    expect(backCells[7].change).toBe(Number.NEGATIVE_INFINITY);
  });

  it('slices are Blobs (IndexedDB copies a handle, not the text); slices stored as text by an earlier version still read', async () => {
    const rows = Array.from({ length: SLICE_AT + 1 }, (_, i) => ({ status: 'ok', strides_completed: i }));
    const packed = (await packForStorage({ value: { rows } })) as { value: { rows: { $pronkSlices: unknown[]; length: number } } };
    const slices = packed.value.rows.$pronkSlices;
    expect(slices.length).toBe(3);
    expect(slices.every((slice) => slice instanceof Blob)).toBe(true);
    const asText = { value: { rows: { $pronkSlices: await Promise.all((slices as Blob[]).map((b) => b.text())), length: rows.length } } };
    expect(await unpackFromStorage(asText)).toEqual({ value: { rows } });
    expect(await unpackFromStorage(packed)).toEqual({ value: { rows } });
  });

  it('short arrays, and long ones JSON cannot carry (typed arrays), are stored as they are', async () => {
    const short = { value: { rows: [{ a: 1 }, { a: 2 }] } };
    expect(await packForStorage(short)).toEqual(short);
    const typed = { value: { rows: Array.from({ length: SLICE_AT }, () => new Float64Array(2)) } };
    const packed = (await packForStorage(typed)) as typeof typed;
    expect(packed.value.rows).toBe(typed.value.rows);
  });
});
