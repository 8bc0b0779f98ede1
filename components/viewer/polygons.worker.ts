/// <reference lib="webworker" />
// Fetches the polygons in a box and triangulates them off the main thread (lib/viewer/polygon-mesh.ts).
import { buildLayerMeshes } from '@/lib/viewer/polygon-mesh';
import { decodePolygons } from '@/lib/viewer/polygon-wire';

type Req = { id: number; url: string };

self.onmessage = async (e: MessageEvent<Req>) => {
  const { id, url } = e.data;
  try {
    const res = await fetch(url, { credentials: 'same-origin' });
    if (!res.ok) throw new Error(`polygons: HTTP ${res.status} ${(await res.text()).slice(0, 200)}`);
    const p = decodePolygons(new Uint8Array(await res.arrayBuffer()));
    const meshes = buildLayerMeshes(p);
    const transfer: ArrayBuffer[] = [];
    for (const m of meshes) transfer.push(m.positions.buffer as ArrayBuffer, m.colors.buffer as ArrayBuffer, m.fillIndices.buffer as ArrayBuffer, m.lineIndices.buffer as ArrayBuffer);
    (self as unknown as Worker).postMessage({ id, ok: true, total: p.total, returned: p.polyLayer.length, originX: p.originX, originY: p.originY, meshes }, transfer);
  } catch (err) {
    (self as unknown as Worker).postMessage({ id, ok: false, error: err instanceof Error ? err.message : String(err) });
  }
};
