/**
 * A generated layout as a TileSource, for the tiled benchmark: the same mix as bench/geometry-layout.ts (one polygon
 * per 10 µm site: square holes, short and long trenches, 24-gon holes, rare open fields up to 300 µm) but each site
 * seeded on its own, so any window can be generated without the rest — 10 M polygons never exist in memory at once.
 * Polygons come in site order (rows from the bottom), as a flattened file would give them, on layer 1/0; the die
 * outline is layer 0/0. Opened by worker threads through the spec { kind: 'module', url, exportName:
 * 'openGeneratedSource', args: { sites, seed } }.
 */
import type { TileSource, TileSourceHeader } from '../lib/layout/tile-source';
import type { FlatLayout, PolygonSet } from '../lib/layout/types';
import { mulberry32 } from '../lib/random';

const PITCH = 10_000; // dbu (1 nm): 10 µm sites
/** Farthest a site's polygon reaches beyond its own site, dbu (open fields up to 300 µm). */
const REACH = 300_000;

function siteSeed(seed: number, si: number, sj: number): number {
  let h = (seed ^ Math.imul(si + 1, 0x9e3779b1) ^ Math.imul(sj + 1, 0x85ebca77)) >>> 0;
  h = Math.imul(h ^ (h >>> 16), 0x7feb352d) >>> 0;
  return Math.imul(h ^ (h >>> 15), 0x846ca68b) >>> 0;
}

/** The polygon of site (si, sj), appended to coords; returns its point count. */
function site(seed: number, sites: number, si: number, sj: number, out: number[]): number {
  const rnd = mulberry32(siteSeed(seed, si, sj));
  const F = Math.floor;
  const bx = si * PITCH, by = sj * PITCH, D = sites * PITCH;
  const rect = (x0: number, y0: number, x1: number, y1: number) => (out.push(x0, y0, x1, y0, x1, y1, x0, y1), 4);
  const u = rnd();
  if (u < 0.55) {
    const s = 1000 + F(rnd() * 3000);
    const x0 = bx + 500 + F(rnd() * (9000 - s)), y0 = by + 500 + F(rnd() * (9000 - s));
    return rect(x0, y0, x0 + s, y0 + s);
  }
  if (u < 0.97) {
    const long = u >= 0.85;
    const w = 800 + F(rnd() * 1200);
    const len = long ? 12000 + F(rnd() * 18000) : 5000 + F(rnd() * 4000);
    const a = 500 + F(rnd() * (9000 - w)), b = 500 + F(rnd() * Math.max(1, 9000 - len));
    return rnd() < 0.5 ? rect(bx + b, by + a, Math.min(bx + b + len, D), by + a + w) : rect(bx + a, by + b, bx + a + w, Math.min(by + b + len, D));
  }
  if (u < 0.99998) {
    const r = 1000 + F(rnd() * 1500), cx = bx + 5000, cy = by + 5000;
    for (let k = 0; k < 24; k++) out.push(cx + F(r * Math.cos((2 * Math.PI * k) / 24) + 0.5), cy + F(r * Math.sin((2 * Math.PI * k) / 24) + 0.5));
    return 24;
  }
  const s = 100_000 + F(rnd() * 200_000);
  return rect(bx, by, Math.min(bx + s, D), Math.min(by + s, D));
}

export function openGeneratedSource(args: { sites: number; seed?: number }): TileSource {
  const { sites } = args;
  const seed = args.seed ?? 4242;
  const D = sites * PITCH;
  let points = 0;
  for (let sj = 0; sj < sites; sj++)
    for (let si = 0; si < sites; si++) {
      const u = mulberry32(siteSeed(seed, si, sj))();
      points += u >= 0.97 && u < 0.99998 ? 24 : 4;
    }
  const header: TileSourceHeader = {
    format: 'gdsii',
    libraryName: 'BENCH_TILED',
    dbuUm: 0.001,
    userUnitUm: 1,
    topCell: 'TOP',
    cellCount: 1,
    layers: [
      { layer: 0, datatype: 0, polygons: 1, points: 4 },
      { layer: 1, datatype: 0, polygons: sites * sites, points },
    ],
    bboxDbu: [0, 0, D, D],
  };
  return {
    header,
    readTile(box, layers) {
      const sets: PolygonSet[] = [];
      for (const l of layers) {
        if (l.layer === 0 && l.datatype === 0) sets.push({ layer: 0, datatype: 0, coords: Float64Array.of(0, 0, D, 0, D, D, 0, D), offsets: Uint32Array.of(0, 4), count: 1 });
        if (l.layer !== 1 || l.datatype !== 0) continue;
        const i0 = Math.max(0, Math.floor((box[0] - REACH) / PITCH)), i1 = Math.min(sites - 1, Math.floor(box[2] / PITCH));
        const j0 = Math.max(0, Math.floor((box[1] - REACH) / PITCH)), j1 = Math.min(sites - 1, Math.floor(box[3] / PITCH));
        const coords: number[] = [];
        const offsets: number[] = [0];
        for (let sj = j0; sj <= j1; sj++)
          for (let si = i0; si <= i1; si++) {
            const start = coords.length;
            const n = site(seed, sites, si, sj, coords);
            let x0 = Infinity, y0 = Infinity, x1 = -Infinity, y1 = -Infinity;
            for (let k = start; k < start + 2 * n; k += 2) {
              x0 = Math.min(x0, coords[k] as number);
              x1 = Math.max(x1, coords[k] as number);
              y0 = Math.min(y0, coords[k + 1] as number);
              y1 = Math.max(y1, coords[k + 1] as number);
            }
            if (x1 >= box[0] && x0 <= box[2] && y1 >= box[1] && y0 <= box[3]) offsets.push(coords.length / 2);
            else coords.length = start;
          }
        sets.push({ layer: 1, datatype: 0, coords: Float64Array.from(coords), offsets: Uint32Array.from(offsets), count: offsets.length - 1 });
      }
      const layout: FlatLayout = { format: 'gdsii', libraryName: header.libraryName, dbuUm: 0.001, userUnitUm: 1, topCell: 'TOP', cellCount: 1, labels: [], layers: sets, bboxDbu: null };
      return layout;
    },
    close() {},
  };
}
