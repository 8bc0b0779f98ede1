'use client';

import { useEffect, useRef, useState, type RefObject } from 'react';
import type { LayerMesh } from '@/lib/viewer/polygon-mesh';
import { visibleBox, type BoxUm, type View } from '@/lib/viewer/view-transform';
import type { ViewerScene } from './pixi-scene';

/** Most polygons submitted per frame before the viewer draws the coverage raster instead (shared/viewer-perf.md). */
export const POLYGON_BUDGET = 50_000;

type PolygonReply = { id: number; ok: boolean; error?: string; total: number; returned: number; originX: number; originY: number; meshes: LayerMesh[] };
const contains = (outer: BoxUm, inner: BoxUm) => outer[0] <= inner[0] && outer[1] <= inner[1] && outer[2] >= inner[2] && outer[3] >= inner[3];
const area = (b: BoxUm) => (b[2] - b[0]) * (b[3] - b[1]);

/**
 * Level of detail by the count that would be submitted, not by zoom: after the view settles, ask the server for
 * the polygons around it (the view grown by a margin, smaller margins next, then the bare view); if even the bare view
 * holds more than POLYGON_BUDGET, show the coverage raster. Triangulation runs in a worker.
 */
export function usePolygonLod(opts: { ready: boolean; view: View | null; sceneRef: RefObject<ViewerScene | null>; base: string; polygonCount: number | null; dieBboxUm: BoxUm | null; hiddenLayers: Set<number> }): 'raster' | 'polygons' | 'loading' {
  const { ready, view, sceneRef, base, polygonCount, dieBboxUm } = opts;
  const [mode, setMode] = useState<'raster' | 'polygons' | 'loading'>('loading');
  const worker = useRef<Worker | null>(null);
  const state = useRef<{ box: BoxUm | null; tooMany: BoxUm | null; seq: number }>({ box: null, tooMany: null, seq: 0 });
  const hidden = useRef(opts.hiddenLayers);
  hidden.current = opts.hiddenLayers;

  useEffect(() => {
    const w = new Worker(new URL('./polygons.worker.ts', import.meta.url), { type: 'module' });
    worker.current = w;
    return () => w.terminate();
  }, []);

  useEffect(() => {
    const w = worker.current;
    const scene = sceneRef.current;
    if (!ready || !view || !w || !scene || polygonCount === null || !dieBboxUm) return;
    const st = state.current;
    const vb = visibleBox(view);
    if (st.box && contains(st.box, vb)) return; // the drawn polygons already cover the view
    if (st.tooMany && contains(st.tooMany, vb) && area(vb) >= area(st.tooMany) * 0.5) return; // still too many here
    const timer = setTimeout(() => {
      const whole = polygonCount <= POLYGON_BUDGET;
      const grow = (f: number): BoxUm => {
        const gx = (vb[2] - vb[0]) * f;
        const gy = (vb[3] - vb[1]) * f;
        return [vb[0] - gx, vb[1] - gy, vb[2] + gx, vb[3] + gy];
      };
      // Margins of half, a fifth, then none of the view on each side: the largest that stays within budget.
      const tries: BoxUm[] = whole ? [dieBboxUm] : [grow(0.5), grow(0.2), vb];
      const ask = (box: BoxUm, rest: BoxUm[]) => {
        const id = ++st.seq;
        w.onmessage = (e: MessageEvent<PolygonReply>) => {
          if (e.data.id !== st.seq) return;
          const s = sceneRef.current;
          if (!s || !e.data.ok) return setMode('raster');
          if (e.data.returned > 0 || e.data.total === 0) {
            st.box = whole ? [-Infinity, -Infinity, Infinity, Infinity] : box;
            st.tooMany = null;
            s.setPolygons(e.data.meshes, e.data.originX, e.data.originY, hidden.current);
            s.setPolygonMode(true);
            setMode('polygons');
          } else if (rest.length > 0) {
            ask(rest[0]!, rest.slice(1));
          } else {
            st.box = null;
            st.tooMany = box;
            s.setPolygons([], 0, 0, hidden.current);
            s.setPolygonMode(false);
            setMode('raster');
          }
        };
        w.postMessage({ id, url: `${base}/polygons?box=${box.map((v) => v.toFixed(3)).join(',')}&max=${POLYGON_BUDGET}` });
      };
      ask(tries[0]!, tries.slice(1));
    }, 120);
    return () => clearTimeout(timer);
  }, [ready, view, sceneRef, base, polygonCount, dieBboxUm]);

  return mode;
}
