/**
 * Features: connected openings of one layer after union, stitched across union tiles, with area, perimeter,
 * centroid, widths and a kind.
 *
 * Kind rule (first match wins; thresholds are options):
 * 1. 'open-field': maxWidth ≥ openFieldWidthUm (default 100 µm) — large exposed areas that drive loading.
 * 2. 'trench': lengthUm / minWidthUm ≥ trenchAspect (default 3), lengthUm = max(area/minWidth, longest bbox side).
 * 3. 'round-hole': area within [0.97, 1.08] × the area of the largest inscribed disk, and minWidth ≥ 0.9 maxWidth.
 * 4. 'square-hole': a square or short rectangle: maxWidth within 2 % of minWidth and the perimeter within 2 % of
 *    2·(minWidth + area/minWidth), the perimeter of the rectangle of that width and area (rotation-invariant).
 * 5. 'irregular': everything else.
 * Two openings touching only at a point are separate features; openings sharing an edge stretch are one.
 */
import ClipperLib from 'clipper-lib';
import type { PolygonSet } from '../layout/types';
import { openRegions, type OpenRegions } from './open-regions';
import { ringArea, ringMoments, ringPerimeter } from './ring';
import type { Box, Feature, FeatureKind, Polarity } from './types';
import { featureWidths, type WidthOptions } from './widths';

export interface FeatureOptions extends WidthOptions {
  polarity?: Polarity;
  /** Reference region (dbu); default: bbox of the set. */
  regionDbu?: Box;
  openFieldWidthUm?: number;
  trenchAspect?: number;
  tileDbu?: number;
}

function find(parent: Uint32Array, a: number): number {
  while (parent[a] !== a) {
    parent[a] = parent[parent[a] as number] as number;
    a = parent[a] as number;
  }
  return a;
}

/** Classify one feature by the rule in the module doc. */
export function classifyFeature(f: Pick<Feature, 'areaUm2' | 'perimeterUm' | 'minWidthUm' | 'maxWidthUm' | 'lengthUm'>, opts: { openFieldWidthUm?: number; trenchAspect?: number } = {}): FeatureKind {
  if (f.maxWidthUm >= (opts.openFieldWidthUm ?? 100)) return 'open-field';
  if (f.minWidthUm > 0 && f.lengthUm / f.minWidthUm >= (opts.trenchAspect ?? 3)) return 'trench';
  const disk = Math.PI * (f.maxWidthUm / 2) ** 2;
  if (disk > 0 && f.areaUm2 >= 0.97 * disk && f.areaUm2 <= 1.08 * disk && f.minWidthUm >= 0.9 * f.maxWidthUm) return 'round-hole';
  if (f.minWidthUm > 0 && f.maxWidthUm <= 1.02 * f.minWidthUm) {
    const rectPerimeter = 2 * (f.minWidthUm + f.areaUm2 / f.minWidthUm);
    if (Math.abs(f.perimeterUm - rectPerimeter) <= 0.02 * f.perimeterUm) return 'square-hole';
  }
  return 'irregular';
}

/** Features from precomputed open regions (share one `openRegions` between coverage and features). */
export function featuresFromRegions(regions: OpenRegions, opts: FeatureOptions = {}): Feature[] {
  const n = regions.pieceCount;
  const parent = new Uint32Array(n);
  for (let p = 0; p < n; p++) parent[p] = p;
  for (let s = 0; s < regions.seamA.length; s++) {
    const a = find(parent, regions.seamA[s] as number), b = find(parent, regions.seamB[s] as number);
    if (a !== b) parent[Math.max(a, b)] = Math.min(a, b);
  }
  const seamByRoot = new Map<number, number>();
  for (let s = 0; s < regions.seamA.length; s++) {
    const r = find(parent, regions.seamA[s] as number);
    seamByRoot.set(r, (seamByRoot.get(r) ?? 0) + (regions.seamLen[s] as number));
  }
  // Group pieces by root (pieces are in tile order; roots are the smallest piece index).
  const members = new Map<number, number[]>();
  for (let p = 0; p < n; p++) {
    const r = find(parent, p);
    let list = members.get(r);
    if (!list) members.set(r, (list = []));
    list.push(p);
  }
  const u = regions.dbuUm;
  const c = regions.coords;
  const out: Feature[] = [];
  for (const [root, pieces] of members) {
    let area = 0, perim = 0, mx = 0, my = 0;
    const bbox: Box = [Infinity, Infinity, -Infinity, -Infinity];
    const rings: [number, number][] = [];
    for (const p of pieces) {
      for (let r = regions.pieceRings[p] as number; r < (regions.pieceRings[p + 1] as number); r++) {
        const s = regions.ringOffsets[r] as number, e = regions.ringOffsets[r + 1] as number;
        rings.push([s, e]);
        area += ringArea(c, 2 * s, 2 * e);
        perim += ringPerimeter(c, 2 * s, 2 * e);
        const [a, b] = ringMoments(c, 2 * s, 2 * e);
        mx += a;
        my += b;
        for (let k = s; k < e; k++) {
          const x = c[2 * k] as number, y = c[2 * k + 1] as number;
          if (x < bbox[0]) bbox[0] = x;
          if (y < bbox[1]) bbox[1] = y;
          if (x > bbox[2]) bbox[2] = x;
          if (y > bbox[3]) bbox[3] = y;
        }
      }
    }
    if (area <= 0) continue;
    perim -= 2 * (seamByRoot.get(root) ?? 0);
    // Pieces cut by tile lines are merged first: the exact-distance refinements must not see tile seams.
    const w = pieces.length > 1 ? featureWidths(...mergePieces(c, rings), bbox, area, perim, opts) : featureWidths(c, rings, bbox, area, perim, opts);
    const areaUm2 = area * u * u;
    const minWidthUm = w.minWidth * u, maxWidthUm = w.maxWidth * u;
    const lengthUm = Math.max(minWidthUm > 0 ? areaUm2 / minWidthUm : 0, Math.max(bbox[2] - bbox[0], bbox[3] - bbox[1]) * u);
    const f: Feature = {
      id: 0,
      kind: 'irregular',
      centroidUm: [(mx / area) * u, (my / area) * u],
      bboxUm: [bbox[0] * u, bbox[1] * u, bbox[2] * u, bbox[3] * u],
      areaUm2,
      perimeterUm: perim * u,
      minWidthUm,
      maxWidthUm,
      lengthUm,
      widthStepUm: w.step * u,
      widthExact: w.exact,
      pieces: pieces.length,
    };
    f.kind = classifyFeature(f, opts);
    out.push(f);
  }
  // Stable ids: by bbox lower edge, then left edge (reading order from the bottom of the layout).
  out.sort((a, b) => a.bboxUm[1] - b.bboxUm[1] || a.bboxUm[0] - b.bboxUm[0] || a.centroidUm[0] - b.centroidUm[0]);
  out.forEach((f, k) => (f.id = k + 1));
  return out;
}

/**
 * Connected openings of one layer (see module doc). Input polygons in dbu (nonzero fill); output in µm.
 * @example extractFeatures(set, 0.001)[0] // { id: 1, kind: 'trench', minWidthUm: 2, ... }
 */
export function extractFeatures(set: PolygonSet, dbuUm: number, opts: FeatureOptions = {}): Feature[] {
  return featuresFromRegions(openRegions(set, dbuUm, { polarity: opts.polarity, regionDbu: opts.regionDbu, tileDbu: opts.tileDbu }), opts);
}

/** Union of a feature's tile pieces (clipper, integer dbu; the pieces only abut, so no new vertices arise). */
function mergePieces(coords: Float64Array, rings: [number, number][]): [Float64Array, [number, number][]] {
  const clipper = new ClipperLib.Clipper();
  const paths: ClipperLib.Paths = rings.map(([s, e]) => {
    const path: ClipperLib.Path = [];
    for (let k = s; k < e; k++) path.push({ X: coords[2 * k] as number, Y: coords[2 * k + 1] as number });
    return path;
  });
  clipper.AddPaths(paths, ClipperLib.PolyType.ptSubject, true);
  const out: ClipperLib.Paths = [];
  clipper.Execute(ClipperLib.ClipType.ctUnion, out, ClipperLib.PolyFillType.pftNonZero, ClipperLib.PolyFillType.pftNonZero);
  const xy: number[] = [];
  const merged: [number, number][] = [];
  for (const path of out) {
    const s = xy.length / 2;
    for (const pt of path) xy.push(pt.X, pt.Y);
    merged.push([s, xy.length / 2]);
  }
  return [Float64Array.from(xy), merged];
}
