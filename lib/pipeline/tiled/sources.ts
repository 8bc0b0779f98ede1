/**
 * Serialisable descriptions of a TileSource, so every worker (thread or queue worker) opens its own reader instead
 * of receiving polygons: { kind: 'memory', layout } for tests and small layouts (typed arrays over a
 * SharedArrayBuffer are shared with threads, not copied), { kind: 'module', url, exportName, args } for any source
 * a module can open (a generated layout in the benchmark), { kind: 'file', path } for a file every worker can read,
 * { kind: 'stored', key } for a layout behind the storage interface (stored-source.ts: a tile queue worker on any
 * machine fetches it into its read cache, then opens it as a file).
 */
import { openLayoutTileSource } from '../../layout/open-tile-source';
import { inMemoryTileSource, type TileSource } from '../../layout/tile-source';
import type { FlatLayout } from '../../layout/types';

export type TileSourceSpec =
  | { kind: 'memory'; layout: FlatLayout }
  /** A layout file on a disk every worker can read: GDSII is indexed in place (never read whole), CSV read whole. */
  | { kind: 'file'; path: string; topCell?: string }
  /** `(await import(url))[exportName](args)` must return a TileSource (or a promise of one). */
  | { kind: 'module'; url: string; exportName: string; args: unknown }
  /**
   * A layout in storage (lib/storage): its key, and where the analysing process's storage is (ObjectStore.where),
   * so a worker configured for another bucket or folder refuses instead of reading something else.
   */
  | { kind: 'stored'; key: string; where: string; topCell?: string };

export async function openTileSource(spec: TileSourceSpec): Promise<TileSource> {
  if (spec.kind === 'memory') return inMemoryTileSource(spec.layout);
  // Storage is not loaded on tile threads: the tile queue worker resolves the key to a local file first.
  if (spec.kind === 'stored') throw new Error(`tile source ${spec.key}: a stored layout is opened through resolveStoredSpec (stored-source.ts), not on a tile thread`);
  if (spec.kind === 'file') return openLayoutTileSource(spec.path, spec.topCell !== undefined ? { topCell: spec.topCell } : {});
  const mod = (await import(spec.url)) as Record<string, unknown>;
  const open = mod[spec.exportName];
  if (typeof open !== 'function') throw new Error(`tile source module ${spec.url} has no function ${spec.exportName}`);
  return (await (open as (a: unknown) => TileSource | Promise<TileSource>)(spec.args)) as TileSource;
}

/** A copy of the layout whose polygon arrays live in shared memory (threads then read them without copying). */
export function shareLayout(layout: FlatLayout): FlatLayout {
  const share = <T extends Float64Array | Uint32Array>(a: T): T => {
    const Ctor = a.constructor as { new (b: SharedArrayBuffer): T; BYTES_PER_ELEMENT: number };
    const copy = new Ctor(new SharedArrayBuffer(Math.max(1, a.length) * Ctor.BYTES_PER_ELEMENT));
    copy.set(a);
    return a.length === 0 ? (copy.subarray(0, 0) as T) : copy;
  };
  return { ...layout, layers: layout.layers.map((s) => ({ ...s, coords: share(s.coords), offsets: share(s.offsets) })) };
}
