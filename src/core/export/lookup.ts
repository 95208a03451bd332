// The TypeScript reference of the exported lookup, in float32, and the tables' checksum.
//
// Every step rounds to float32 (Math.fround) exactly where the generated C (c99.ts) does, in the
// same order, so for the same float32 input the two give the same float32 bits: IEEE 754 single
// addition, subtraction, multiplication and division are correctly rounded, and a float64
// operation on two float32 values followed by one rounding to float32 gives the same result (the
// double format holds more than 2·24 + 2 bits, so the double rounding is innocuous; Figueroa 1995,
// "When is double rounding innocuous?", ACM SIGNUM Newsletter 30(3):21–26). The C matches when it
// is compiled without contracting a*b+c into a fused multiply-add (-std=c99, or -ffp-contract=off)
// and with FLT_EVAL_METHOD == 0 (no wider intermediates; every SSE or single-precision FPU).

const f32 = Math.fround;

/** One table on a grid: float32 axis (strictly increasing, >= 2 points) and float32 values. */
export interface Float32Table {
  /** (points) float32, s since apex, strictly increasing. */
  axis: Float32Array;
  /** (points) float32, the table's value at each axis point. */
  values: Float32Array;
}

export interface LookupResult {
  /** The float32 value the C lookup writes to its output pointer. */
  value: number;
  /** The C lookup's return value: true inside [axis[0], axis[last]], false when clamped or NaN. */
  inRange: boolean;
}

/**
 * Linear interpolation on the grid, exactly as the exported C `<prefix>_..._lookup`:
 *  - NaN: the first value (the apex value), not in range;
 *  - t < axis[0]: the first value, not in range; t == axis[0]: the first value, in range;
 *  - t > axis[last]: the last value, not in range; t == axis[last]: the last value, in range;
 *  - inside: cell [lo, lo + 1] with axis[lo] <= t < axis[lo + 1] by bisection,
 *    w = (t − t0) / (t1 − t0), value = v0 + w · (v1 − v0), each operation rounded to float32.
 */
export function lookupFloat32(table: Float32Table, tSinceApex: number): LookupResult {
  const { axis, values } = table;
  const last = axis.length - 1;
  const t = f32(tSinceApex);
  if (Number.isNaN(t)) return { value: values[0], inRange: false };
  if (t <= axis[0]) return { value: values[0], inRange: t >= axis[0] };
  if (t >= axis[last]) return { value: values[last], inRange: t <= axis[last] };
  let lo = 0;
  let hi = last;
  while (hi - lo > 1) {
    const mid = lo + ((hi - lo) >>> 1);
    if (axis[mid] <= t) lo = mid;
    else hi = mid;
  }
  const t0 = axis[lo];
  const t1 = axis[lo + 1];
  const v0 = values[lo];
  const v1 = values[lo + 1];
  const w = f32(f32(t - t0) / f32(t1 - t0));
  const value = f32(v0 + f32(w * f32(v1 - v0)));
  return { value, inRange: true };
}

// ---------------------------------------------------------------------------------------------
// CRC-32 (the IEEE 802.3 / zlib polynomial, reflected, 0xEDB88320, initial and final XOR
// 0xFFFFFFFF; "CRC-32/ISO-HDLC" in Greg Cook's catalogue of parametrised CRC algorithms, check
// value 0xCBF43926 for the ASCII bytes "123456789"), bitwise, as the generated C computes it.

/** CRC-32 register after feeding `bytes`, starting from `crc` (not finalised). */
export function crc32Update(crc: number, bytes: Uint8Array): number {
  let c = crc >>> 0;
  for (let i = 0; i < bytes.length; i++) {
    c = (c ^ bytes[i]) >>> 0;
    for (let k = 0; k < 8; k++) c = ((c >>> 1) ^ (0xedb88320 & -(c & 1))) >>> 0;
  }
  return c >>> 0;
}

/** CRC-32 of a byte string. */
export function crc32(bytes: Uint8Array): number {
  return (crc32Update(0xffffffff, bytes) ^ 0xffffffff) >>> 0;
}

/** The little-endian bytes of float32 values (whatever the host's byte order). */
export function float32Bytes(values: Float32Array): Uint8Array {
  const bytes = new Uint8Array(values.length * 4);
  const view = new DataView(bytes.buffer);
  values.forEach((v, i) => view.setFloat32(i * 4, v, true));
  return bytes;
}

/** CRC-32 over the little-endian float32 bytes of the arrays, in the order given. */
export function crc32Float32(arrays: readonly Float32Array[]): number {
  let c = 0xffffffff;
  for (const a of arrays) c = crc32Update(c, float32Bytes(a));
  return (c ^ 0xffffffff) >>> 0;
}

/** `0x` and eight lowercase hex digits. */
export function hex32(value: number): string {
  return `0x${(value >>> 0).toString(16).padStart(8, '0')}`;
}

/** The float32 neighbour of a float32 value toward +Infinity (or -Infinity with dir = -1). */
export function nextFloat32(value: number, dir: 1 | -1 = 1): number {
  const v = f32(value);
  if (Number.isNaN(v) || v === dir * Infinity) return v;
  if (v === 0) return dir * 1.401298464324817e-45; // the smallest subnormal
  const buf = new DataView(new ArrayBuffer(4));
  buf.setFloat32(0, v);
  const bits = buf.getUint32(0);
  buf.setUint32(0, (v > 0) === (dir > 0) ? bits + 1 : bits - 1);
  return buf.getFloat32(0);
}

/** Units in the last place of a float32 value (the gap to the next float32 away from zero). */
export function ulpFloat32(value: number): number {
  const v = Math.abs(f32(value));
  return nextFloat32(v, 1) - v;
}
