/**
 * A static PNG preview of a result map (the interactive viewer comes separately). Pure encoding with node:zlib:
 * 8-bit RGBA, no interlace. The image is north-up: row 0 is the top of the die (largest y), since map rows run
 * along +y. Pixels without a value (NaN) are drawn in a neutral light grey.
 */
import { deflateSync } from 'node:zlib';
import type { GridMap } from '@/lib/pipeline/grid-file';

const CRC_TABLE = (() => {
  const t = new Uint32Array(256);
  for (let n = 0; n < 256; n++) {
    let c = n;
    for (let k = 0; k < 8; k++) c = c & 1 ? 0xedb88320 ^ (c >>> 1) : c >>> 1;
    t[n] = c >>> 0;
  }
  return t;
})();

function crc32(bytes: Uint8Array): number {
  let c = 0xffffffff;
  for (let i = 0; i < bytes.length; i++) c = (CRC_TABLE[(c ^ (bytes[i] as number)) & 0xff] as number) ^ (c >>> 8);
  return (c ^ 0xffffffff) >>> 0;
}

function chunk(type: string, data: Uint8Array): Uint8Array {
  const out = new Uint8Array(12 + data.length);
  const dv = new DataView(out.buffer);
  dv.setUint32(0, data.length);
  for (let i = 0; i < 4; i++) out[4 + i] = type.charCodeAt(i);
  out.set(data, 8);
  dv.setUint32(8 + data.length, crc32(out.subarray(4, 8 + data.length)));
  return out;
}

/** Encodes RGBA pixels (row-major, top row first) as a PNG file. */
export function encodePng(width: number, height: number, rgba: Uint8Array): Uint8Array {
  if (rgba.length !== width * height * 4) throw new RangeError(`expected ${width * height * 4} RGBA bytes, got ${rgba.length}`);
  const raw = new Uint8Array((width * 4 + 1) * height);
  for (let y = 0; y < height; y++) {
    raw[y * (width * 4 + 1)] = 0; // filter: none
    raw.set(rgba.subarray(y * width * 4, (y + 1) * width * 4), y * (width * 4 + 1) + 1);
  }
  const ihdr = new Uint8Array(13);
  const dv = new DataView(ihdr.buffer);
  dv.setUint32(0, width);
  dv.setUint32(4, height);
  ihdr.set([8, 6, 0, 0, 0], 8); // 8-bit, RGBA, deflate, adaptive filtering, no interlace
  const parts = [new Uint8Array([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]), chunk('IHDR', ihdr), chunk('IDAT', deflateSync(raw)), chunk('IEND', new Uint8Array(0))];
  const out = new Uint8Array(parts.reduce((n, p) => n + p.length, 0));
  let o = 0;
  for (const p of parts) {
    out.set(p, o);
    o += p.length;
  }
  return out;
}

type Rgb = [number, number, number];
/** Colour stops, position 0..1. Risk: calm slate → amber at 0.8 of a limit → red at and beyond the limit. */
const RISK_STOPS: [number, Rgb][] = [
  [0, [226, 232, 240]],
  [0.5, [125, 170, 160]],
  [0.8, [236, 178, 60]],
  [1, [200, 45, 40]],
];
/** Sequential ramp for other quantities: pale sand → copper → deep plum. */
const RAMP_STOPS: [number, Rgb][] = [
  [0, [250, 244, 228]],
  [0.45, [214, 140, 70]],
  [1, [70, 30, 80]],
];

function colour(stops: [number, Rgb][], t: number): Rgb {
  const x = Math.min(1, Math.max(0, t));
  for (let k = 1; k < stops.length; k++) {
    const [p1, c1] = stops[k] as [number, Rgb];
    const [p0, c0] = stops[k - 1] as [number, Rgb];
    if (x <= p1) {
      const f = p1 > p0 ? (x - p0) / (p1 - p0) : 0;
      return [c0[0] + f * (c1[0] - c0[0]), c0[1] + f * (c1[1] - c0[1]), c0[2] + f * (c1[2] - c0[2])];
    }
  }
  return (stops.at(-1) as [number, Rgb])[1];
}

/**
 * Renders a map at most `maxSide` pixels on its longer side (each output pixel takes the maximum of the map pixels
 * it covers, so small hot spots stay visible). Risk uses a fixed 0..1 scale (1 = at a limit); other maps are
 * scaled from their minimum to maximum.
 */
export function renderMapPng(map: GridMap, maxSide = 640): Uint8Array {
  const { nx, ny } = map.grid;
  const scale = Math.max(nx, ny) > maxSide ? maxSide / Math.max(nx, ny) : Math.min(4, Math.floor(maxSide / Math.max(nx, ny)) || 1);
  const w = Math.max(1, Math.round(nx * scale));
  const h = Math.max(1, Math.round(ny * scale));
  const v = map.values;
  let lo = Infinity;
  let hi = -Infinity;
  for (let k = 0; k < v.length; k++) {
    const x = v[k] as number;
    if (Number.isFinite(x)) {
      if (x < lo) lo = x;
      if (x > hi) hi = x;
    }
  }
  const isRisk = map.kind === 'risk';
  const stops = isRisk ? RISK_STOPS : RAMP_STOPS;
  const norm = (x: number) => (isRisk ? x : hi > lo ? (x - lo) / (hi - lo) : 0.5);
  const rgba = new Uint8Array(w * h * 4);
  for (let y = 0; y < h; y++) {
    // Output row y (top first) covers map rows from the top down.
    const j1 = ny - Math.floor((y * ny) / h);
    const j0 = Math.max(0, ny - Math.floor(((y + 1) * ny) / h));
    for (let x = 0; x < w; x++) {
      const i0 = Math.floor((x * nx) / w);
      const i1 = Math.max(i0 + 1, Math.floor(((x + 1) * nx) / w));
      let best = -Infinity;
      for (let j = j0; j < Math.max(j0 + 1, j1); j++) {
        for (let i = i0; i < i1; i++) {
          const s = v[j * nx + i] as number;
          if (Number.isFinite(s) && s > best) best = s;
        }
      }
      const o = (y * w + x) * 4;
      const [r, g, b] = best === -Infinity ? ([236, 236, 236] as Rgb) : colour(stops, norm(best));
      rgba[o] = Math.round(r);
      rgba[o + 1] = Math.round(g);
      rgba[o + 2] = Math.round(b);
      rgba[o + 3] = 255;
    }
  }
  return encodePng(w, h, rgba);
}
