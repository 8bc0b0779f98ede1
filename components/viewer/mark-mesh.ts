/**
 * Flag marks as one triangle mesh in screen pixels, rebuilt on every view change: thousands of small pixi
 * Graphics cost ~60 ms a frame on SwiftShader (each goes through the batcher), one mesh about 1–2 ms. Each mark
 * is its shape in a dark outline colour, then the same shape 1.5 px smaller in its severity colour.
 */
import type { MarkShape } from './flag-marks';

const OUTLINE = 0xff111111 >>> 0;
const CIRCLE_SIDES = 12;

/** Unit outline of a shape (x right, y down), radius 1. */
function unitShape(shape: MarkShape): number[] {
  if (shape === 'triangle') return [0, -1.15, 1, 0.75, -1, 0.75];
  if (shape === 'diamond') return [0, -1, 1, 0, 0, 1, -1, 0];
  const out: number[] = [];
  for (let k = 0; k < CIRCLE_SIDES; k++) out.push(0.8 * Math.cos((2 * Math.PI * k) / CIRCLE_SIDES), 0.8 * Math.sin((2 * Math.PI * k) / CIRCLE_SIDES));
  return out;
}
const SHAPES: Record<MarkShape, number[]> = { triangle: unitShape('triangle'), diamond: unitShape('diamond'), circle: unitShape('circle') };

/** RGB 0xRRGGBB → opaque RGBA8 as a little-endian Uint32 (ABGR). */
export const opaqueAbgr = (rgb: number): number => ((0xff << 24) | ((rgb & 0xff) << 16) | (rgb & 0xff00) | ((rgb >> 16) & 0xff)) >>> 0;

export interface MarkInstance {
  x: number;
  y: number;
  shape: MarkShape;
  size: number;
  /** 0xRRGGBB */
  color: number;
}

export function buildMarkMesh(marks: MarkInstance[]): { positions: Float32Array; colors: Uint32Array; indices: Uint32Array } {
  let verts = 0;
  let tris = 0;
  for (const m of marks) {
    const n = SHAPES[m.shape].length / 2;
    verts += 2 * n;
    tris += 2 * (n - 2);
  }
  const positions = new Float32Array(2 * verts);
  const colors = new Uint32Array(verts);
  const indices = new Uint32Array(3 * tris);
  let v = 0;
  let t = 0;
  for (const m of marks) {
    const unit = SHAPES[m.shape];
    const n = unit.length / 2;
    for (const [r, color] of [[m.size + 1.5, OUTLINE], [m.size, opaqueAbgr(m.color)]] as const) {
      const base = v;
      for (let k = 0; k < n; k++, v++) {
        positions[2 * v] = m.x + r * (unit[2 * k] as number);
        positions[2 * v + 1] = m.y + r * (unit[2 * k + 1] as number);
        colors[v] = color;
      }
      // Convex shapes: a fan from the first vertex.
      for (let k = 1; k < n - 1; k++) {
        indices[t++] = base;
        indices[t++] = base + k;
        indices[t++] = base + k + 1;
      }
    }
  }
  return { positions, colors, indices };
}
