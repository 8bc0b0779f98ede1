/** Messages between the server and the polygon-index worker thread (lib/viewer/index-worker.ts). */
import type { WirePolygons } from './polygon-wire';

/** wholeReadBytes: GDSII files above it are read a window at a time from their on-disk index (layout-windows.ts). */
export type IndexRequest = { id: number; revisionId: string; path: string; topCell: string | null; wholeReadBytes?: number; box: [number, number, number, number]; max: number };
export type IndexReply =
  | { id: number; ok: true; threadId: number; polygons: WirePolygons }
  | { id: number; ok: false; name: string; message: string; code?: string };
