/**
 * Polygons from the TRPOLY1 answer → GPU-ready typed arrays, one batch per layer: filled triangles (earcut;
 * rectangles, the common case, as two triangles directly) and outline segments (line-list indices). Positions
 * are µm relative to the answer's origin (float32 keeps ~1e-3 µm there); colours are premultiplied RGBA8.
 */
import earcut from 'earcut';
import type { WirePolygons } from './polygon-wire';

export interface LayerMesh {
  layerIndex: number;
  polygons: number;
  positions: Float32Array;
  /** Fill colour per vertex (premultiplied RGBA8, little-endian ABGR in the Uint32). */
  colors: Uint32Array;
  fillIndices: Uint32Array;
  lineIndices: Uint32Array;
}

/** Okabe & Ito's colour-blind-safe palette (2008), cycled over layers. */
export const LAYER_COLORS: [number, number, number][] = [
  [0, 114, 178],
  [230, 159, 0],
  [0, 158, 115],
  [204, 121, 167],
  [86, 180, 233],
  [213, 94, 0],
  [240, 228, 66],
  [0, 0, 0],
];

export function packPremultiplied(r: number, g: number, b: number, a: number): number {
  return ((Math.round(a * 255) << 24) | (Math.round(b * a) << 16) | (Math.round(g * a) << 8) | Math.round(r * a)) >>> 0;
}

export function buildLayerMeshes(p: WirePolygons, fillAlpha = 0.45): LayerMesh[] {
  const r = p.polyLayer.length;
  // Group polygons by layer (the server sorts them by layer, but do not rely on it).
  const byLayer = new Map<number, number[]>();
  for (let k = 0; k < r; k++) {
    const l = p.polyLayer[k] as number;
    let list = byLayer.get(l);
    if (!list) byLayer.set(l, (list = []));
    list.push(k);
  }
  const out: LayerMesh[] = [];
  for (const [layerIndex, polys] of byLayer) {
    let pts = 0;
    for (const k of polys) pts += (p.offsets[k + 1] as number) - (p.offsets[k] as number);
    const positions = new Float32Array(2 * pts);
    const fill: number[] = [];
    const lines = new Uint32Array(2 * pts);
    const [cr, cg, cb] = LAYER_COLORS[layerIndex % LAYER_COLORS.length]!;
    const colors = new Uint32Array(pts).fill(packPremultiplied(cr, cg, cb, fillAlpha));
    let v = 0;
    let li = 0;
    for (const k of polys) {
      const a = p.offsets[k] as number;
      const b = p.offsets[k + 1] as number;
      const n = b - a;
      const base = v;
      positions.set(p.coords.subarray(2 * a, 2 * b), 2 * base);
      v += n;
      for (let q = 0; q < n; q++) {
        lines[li++] = base + q;
        lines[li++] = base + ((q + 1) % n);
      }
      if (n === 4 && convexQuad(p.coords, a)) {
        fill.push(base, base + 1, base + 2, base, base + 2, base + 3);
      } else if (n > 2) {
        const tri = earcut(p.coords.subarray(2 * a, 2 * b));
        for (const t of tri) fill.push(base + t);
      }
    }
    out.push({ layerIndex, polygons: polys.length, positions, colors, fillIndices: Uint32Array.from(fill), lineIndices: lines.subarray(0, li) });
  }
  return out.sort((x, y) => x.layerIndex - y.layerIndex);
}

/** True when the 4-point ring starting at point `a` turns the same way at every corner (a convex quad, e.g. a rectangle). */
function convexQuad(c: Float32Array, a: number): boolean {
  let sign = 0;
  for (let q = 0; q < 4; q++) {
    const i = a + q, j = a + ((q + 1) % 4), k = a + ((q + 2) % 4);
    const cross = (c[2 * j]! - c[2 * i]!) * (c[2 * k + 1]! - c[2 * j + 1]!) - (c[2 * j + 1]! - c[2 * i + 1]!) * (c[2 * k]! - c[2 * j]!);
    if (cross === 0) continue;
    if (sign === 0) sign = Math.sign(cross);
    else if (Math.sign(cross) !== sign) return false;
  }
  return true;
}
