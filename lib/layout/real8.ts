/**
 * GDSII 8-byte real ("real8"): sign bit, 7-bit excess-64 exponent of 16, 56-bit fraction with the binary point
 * before it: value = (−1)^s · (fraction / 2^56) · 16^(e − 64)  (Calma GDSII Stream Format Manual 6.0, "Data types").
 * This is not IEEE 754; decoding through DataView.getFloat64 would be wrong.
 */

/** Decode the real8 starting at `offset` of `bytes`. */
export function decodeReal8(bytes: Uint8Array, offset: number): number {
  const b0 = bytes[offset] ?? 0;
  const sign = b0 & 0x80 ? -1 : 1;
  const exponent = (b0 & 0x7f) - 64;
  // 56-bit fraction split in a 24-bit high part and a 32-bit low part so every step stays exact in float64.
  const hi = ((bytes[offset + 1] ?? 0) << 16) | ((bytes[offset + 2] ?? 0) << 8) | (bytes[offset + 3] ?? 0);
  const lo =
    (((bytes[offset + 4] ?? 0) << 24) >>> 0) +
    ((bytes[offset + 5] ?? 0) << 16) +
    ((bytes[offset + 6] ?? 0) << 8) +
    (bytes[offset + 7] ?? 0);
  const mantissa = hi / 2 ** 24 + lo / 2 ** 56;
  return sign * mantissa * 16 ** exponent;
}

/**
 * Encode a finite number as real8 into `out` at `offset` (8 bytes). The fraction is rounded to nearest; values too
 * small for the format become 0, values too large throw.
 */
export function encodeReal8(value: number, out: Uint8Array, offset: number): void {
  out.fill(0, offset, offset + 8);
  if (value === 0 || !Number.isFinite(value)) {
    if (!Number.isFinite(value)) throw new RangeError(`real8 cannot hold ${value}`);
    return;
  }
  const sign = value < 0 ? 0x80 : 0;
  let v = Math.abs(value);
  let exponent = 0;
  while (v >= 1) { v /= 16; exponent++; }
  while (v < 1 / 16) { v *= 16; exponent--; }
  // v in [1/16, 1): fraction = round(v · 2^56), carried into the exponent when it rounds up to 2^56.
  let hi = Math.floor(v * 2 ** 24);
  let lo = Math.round((v * 2 ** 24 - hi) * 2 ** 32);
  if (lo >= 2 ** 32) { lo -= 2 ** 32; hi += 1; }
  if (hi >= 2 ** 24) { hi = 2 ** 20; lo = 0; exponent += 1; }
  const e = exponent + 64;
  if (e > 127) throw new RangeError(`real8 cannot hold ${value}`);
  if (e < 0) return;
  out[offset] = sign | e;
  out[offset + 1] = (hi >>> 16) & 0xff;
  out[offset + 2] = (hi >>> 8) & 0xff;
  out[offset + 3] = hi & 0xff;
  out[offset + 4] = (lo >>> 24) & 0xff;
  out[offset + 5] = (lo >>> 16) & 0xff;
  out[offset + 6] = (lo >>> 8) & 0xff;
  out[offset + 7] = lo & 0xff;
}
