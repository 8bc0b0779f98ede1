/** Append-only typed-array buffers that grow geometrically (×2), so n appends cost O(n) copies in total. */

export class GrowF64 {
  data: Float64Array;
  length = 0;
  constructor(capacity = 64) {
    this.data = new Float64Array(Math.max(4, capacity));
  }
  /** Make room for `extra` more values; returns the backing array (which may have been replaced). */
  reserve(extra: number): Float64Array {
    const need = this.length + extra;
    if (need > this.data.length) {
      let cap = this.data.length * 2;
      while (cap < need) cap *= 2;
      const next = new Float64Array(cap);
      next.set(this.data.subarray(0, this.length));
      this.data = next;
    }
    return this.data;
  }
  push2(x: number, y: number): void {
    const d = this.length + 2 > this.data.length ? this.reserve(2) : this.data;
    d[this.length++] = x;
    d[this.length++] = y;
  }
  view(): Float64Array {
    return this.data.subarray(0, this.length);
  }
}

export class GrowU32 {
  data: Uint32Array;
  length = 0;
  constructor(capacity = 16) {
    this.data = new Uint32Array(Math.max(4, capacity));
  }
  push(v: number): void {
    if (this.length >= this.data.length) {
      const next = new Uint32Array(this.data.length * 2);
      next.set(this.data);
      this.data = next;
    }
    this.data[this.length++] = v;
  }
  view(): Uint32Array {
    return this.data.subarray(0, this.length);
  }
}
