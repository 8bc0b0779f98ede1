/**
 * Where the GDSII index (gdsii-index.ts) puts its typed arrays: ordinary buffers, or shared memory so one index can be
 * handed to worker threads without copying (postMessage shares a SharedArrayBuffer instead of cloning it).
 *
 * Shared arrays are packed into few buffers: posting a message costs per SharedArrayBuffer (measured on Node 20:
 * 200 000 tiny ones took 47 s to post, 200 000 views of one buffer 0.16 s), and a layout with many cells has many
 * short element lists. Arrays up to SLAB_ITEM bytes are cut from SLAB-byte buffers (bump allocation, 8-byte
 * aligned, never freed on their own); larger ones (full element chunks, bucket grids) get a buffer each, so one
 * trimmed or dropped while indexing is freed.
 */

type Ctor<T> = { new (length: number): T; new (buffer: SharedArrayBuffer, byteOffset: number, length: number): T; BYTES_PER_ELEMENT: number };

export interface ArrayAlloc {
  readonly shared: boolean;
  f64(length: number): Float64Array;
  u32(length: number): Uint32Array;
  i32(length: number): Int32Array;
}

const SLAB = 1 << 20;
const SLAB_ITEM = 1 << 16;

export const plainAlloc: ArrayAlloc = {
  shared: false,
  f64: (n) => new Float64Array(n),
  u32: (n) => new Uint32Array(n),
  i32: (n) => new Int32Array(n),
};

/** A new allocator over shared memory (one per index: its slabs live as long as any array cut from them). */
export function sharedAlloc(): ArrayAlloc {
  let slab: SharedArrayBuffer | null = null;
  let used = 0;
  const make = <T>(C: Ctor<T>, length: number): T => {
    const bytes = length * C.BYTES_PER_ELEMENT;
    if (bytes > SLAB_ITEM) return new C(new SharedArrayBuffer(bytes), 0, length);
    const at = (used + 7) & ~7;
    if (!slab || at + bytes > SLAB) {
      slab = new SharedArrayBuffer(SLAB);
      used = 0;
      return make(C, length);
    }
    used = at + bytes;
    return new C(slab, at, length);
  };
  return {
    shared: true,
    f64: (n) => make(Float64Array, n),
    u32: (n) => make(Uint32Array, n),
    i32: (n) => make(Int32Array, n),
  };
}

/** Whether `a`'s memory is shared with other threads. */
export const isShared = (a: ArrayBufferView): boolean => typeof SharedArrayBuffer !== 'undefined' && a.buffer instanceof SharedArrayBuffer;
