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
 *
 * Parallel use: the module has no threads. A caller can give the same `OpenRegions` to n workers with
 * `shard: { index, count: n }` and merge the parts with `numberFeatureTable(concatFeatureTables(parts))` (same
 * features and ids as one call).
 * Output: `featureTableFromRegions` gives columns (feature-table.ts; what the pipeline uses: no object per opening);
 * `featuresFromRegions` / `extractFeatures` give the same rows as `Feature` objects.
 */
import ClipperLib from 'clipper-lib';
import type { PolygonSet } from '../layout/types';
import { openRegions, type OpenRegions } from './open-regions';
import { ringArea, ringMoments, ringPerimeter } from './ring';
import { featureIdOrder, featureList, FeatureTableBuilder, featureKindCode, featureTableOf, numberFeatureTable, type FeatureRow, type FeatureTable } from './feature-table';
import type { Box, Feature, FeatureKind, Polarity } from './types';
import { featureWidths, type WidthCache, type WidthOptions } from './widths';

export interface FeatureOptions extends WidthOptions {
  polarity?: Polarity;
  /** Reference region (dbu); default: bbox of the set. */
  regionDbu?: Box;
  openFieldWidthUm?: number;
  trenchAspect?: number;
  tileDbu?: number;
  /**
   * Measure only the features whose root piece index ≡ index (mod count), so callers can spread the work over
   * workers (each given the same `OpenRegions`) and merge the parts with `numberFeatureTable(concatFeatureTables(parts))` (objects: `numberFeatures`). Default: all.
   */
  shard?: { index: number; count: number };
}

/** Roots are handed out in chunks of this many piece indices when threads share the work (`FeatureClaim`). */
export const FEATURE_CHUNK = 4096;

/**
 * Work shared between threads: each takes the next chunk of FEATURE_CHUNK piece indices from the shared counter
 * `next` (Atomics.add) and records itself in `owner` (one byte per chunk) before measuring it, so a fast thread
 * takes more chunks than a slow or descheduled one, and a caller can redo the chunks of a thread that failed
 * (`only`: measure just the listed chunks instead). `chunk` overrides FEATURE_CHUNK (all sharers must agree).
 */
export type FeatureClaim = ({ next: Int32Array; owner: Uint8Array; me: number } | { only: Uint32Array }) & { chunk?: number };

/** Unnumbered rows with the root piece of each row (unique per feature): `numberFeatureTable(t, roots)` numbers them. */
export interface MeasuredFeatures {
  table: FeatureTable;
  roots: Float64Array;
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

/** Features from precomputed open regions (share one `openRegions` between coverage and features), as objects. */
export function featuresFromRegions(regions: OpenRegions, opts: FeatureOptions = {}): Feature[] {
  return featureList(featureTableFromRegions(regions, opts));
}

/**
 * Features from precomputed open regions as a numbered column table (see feature-table.ts). With `shard` the rows
 * are left unnumbered (ids 0) in root order: merge shards with numberFeatureTable(concatFeatureTables(parts)).
 */
export function featureTableFromRegions(regions: OpenRegions, opts: FeatureOptions = {}): FeatureTable {
  const m = measureFeatures(regions, opts);
  return opts.shard ? m.table : numberFeatureTable(m.table, m.roots);
}

/** Chunk indices 0, 1, … handed out by `claim` (all chunks without one). */
function chunkSource(n: number, claim: FeatureClaim | undefined): () => number {
  const chunks = Math.ceil(n / (claim?.chunk ?? FEATURE_CHUNK));
  if (!claim) {
    let c = 0;
    return () => (c < chunks ? c++ : -1);
  }
  if ('only' in claim) {
    let k = 0;
    return () => (k < claim.only.length ? (claim.only[k++] as number) : -1);
  }
  return () => {
    const c = Atomics.add(claim.next, 0, 1);
    if (c >= chunks) return -1;
    Atomics.store(claim.owner, c, claim.me);
    return c;
  };
}

/** The measuring loop behind featureTableFromRegions: unnumbered rows in the order their chunks were taken. */
export function measureFeatures(regions: OpenRegions, opts: FeatureOptions = {}, claim?: FeatureClaim): MeasuredFeatures {
  const n = regions.pieceCount;
  const parent = new Uint32Array(n);
  for (let p = 0; p < n; p++) parent[p] = p;
  for (let s = 0; s < regions.seamA.length; s++) {
    const a = find(parent, regions.seamA[s] as number), b = find(parent, regions.seamB[s] as number);
    if (a !== b) parent[Math.max(a, b)] = Math.min(a, b);
  }
  // Seam length per root, then pieces grouped by root with a counting sort (typed arrays: ~10⁶ features).
  const seamSum = new Float64Array(n);
  for (let s = 0; s < regions.seamA.length; s++) seamSum[find(parent, regions.seamA[s] as number)]! += regions.seamLen[s] as number;
  const start = new Uint32Array(n + 1);
  for (let p = 0; p < n; p++) start[find(parent, p) + 1]!++;
  for (let p = 0; p < n; p++) start[p + 1]! += start[p] as number;
  const fill = start.slice(0, n);
  const order = new Uint32Array(n);
  for (let p = 0; p < n; p++) order[fill[find(parent, p)]!++] = p;
  const u = regions.dbuUm;
  const c = regions.coords;
  const shardCount = opts.shard?.count ?? 1, shardIndex = opts.shard?.index ?? 0;
  const out = new FeatureTableBuilder(Math.ceil(n / shardCount / (claim ? 2 : 1)) + 16);
  let roots = new Float64Array(out.capacity);
  const cache: WidthCache = new Map();
  // One row object refilled per feature: the builder copies it into its columns.
  const row: FeatureRow = { kind: 0, centroidXUm: 0, centroidYUm: 0, x0Um: 0, y0Um: 0, x1Um: 0, y1Um: 0, areaUm2: 0, perimeterUm: 0, minWidthUm: 0, maxWidthUm: 0, lengthUm: 0, widthStepUm: 0, widthExact: false, pieces: 0 };
  const kindOpts = { openFieldWidthUm: opts.openFieldWidthUm, trenchAspect: opts.trenchAspect };
  const rings: [number, number][] = [];
  // Roots in increasing piece order within a chunk (a root is the smallest piece index of its group).
  const nextChunk = chunkSource(n, claim);
  const chunkSize = claim?.chunk ?? FEATURE_CHUNK;
  for (let chunk = nextChunk(); chunk >= 0; chunk = nextChunk()) for (let root = chunk * chunkSize, rootEnd = Math.min(n, root + chunkSize); root < rootEnd; root++) {
    const g0 = start[root] as number, g1 = start[root + 1] as number;
    if (g1 === g0 || root % shardCount !== shardIndex) continue;
    let area = 0, perim = 0, mx = 0, my = 0;
    let bx0 = Infinity, by0 = Infinity, bx1 = -Infinity, by1 = -Infinity;
    rings.length = 0;
    for (let g = g0; g < g1; g++) {
      const p = order[g] as number;
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
          if (x < bx0) bx0 = x;
          if (y < by0) by0 = y;
          if (x > bx1) bx1 = x;
          if (y > by1) by1 = y;
        }
      }
    }
    const pieceCount = g1 - g0;
    if (area <= 0) continue;
    perim -= 2 * (seamSum[root] as number);
    const bbox: Box = [bx0, by0, bx1, by1];
    // Pieces cut by tile lines are merged first: the exact-distance refinements must not see tile seams.
    const w = pieceCount > 1 && !isBoxFilled(c, rings, bbox, area) ? featureWidths(...mergePieces(c, rings), bbox, area, perim, opts, cache) : featureWidths(c, rings, bbox, area, perim, opts, cache);
    const areaUm2 = area * u * u;
    const minWidthUm = w.minWidth * u, maxWidthUm = w.maxWidth * u;
    row.centroidXUm = (mx / area) * u;
    row.centroidYUm = (my / area) * u;
    row.x0Um = bx0 * u;
    row.y0Um = by0 * u;
    row.x1Um = bx1 * u;
    row.y1Um = by1 * u;
    row.areaUm2 = areaUm2;
    row.perimeterUm = perim * u;
    row.minWidthUm = minWidthUm;
    row.maxWidthUm = maxWidthUm;
    row.lengthUm = Math.max(minWidthUm > 0 ? areaUm2 / minWidthUm : 0, Math.max(bx1 - bx0, by1 - by0) * u);
    row.widthStepUm = w.step * u;
    row.widthExact = w.exact;
    row.pieces = pieceCount;
    row.kind = featureKindCode(classifyFeature(row, kindOpts));
    const k = out.push(row);
    if (k >= roots.length) {
      const grown = new Float64Array(out.capacity);
      grown.set(roots);
      roots = grown;
    }
    roots[k] = root;
  }
  return { table: out.finish(), roots: roots.slice(0, out.count) };
}

/**
 * Sort features into id order and number them from 1: by bbox lower edge, then left edge, then centroid x
 * (reading order from the bottom of the layout). Also merges shards: `numberFeatures([...a, ...b])`.
 * Mutates each feature's id; returns a new array.
 */
export function numberFeatures(out: readonly Feature[]): Feature[] {
  const order = featureIdOrder(featureTableOf(out));
  const sorted: Feature[] = new Array<Feature>(out.length);
  for (let k = 0; k < out.length; k++) {
    const f = out[order[k] as number] as Feature;
    f.id = k + 1;
    sorted[k] = f;
  }
  return sorted;
}

/**
 * Connected openings of one layer (see module doc). Input polygons in dbu (nonzero fill); output in µm.
 * @example extractFeatures(set, 0.001)[0] // { id: 1, kind: 'trench', minWidthUm: 2, ... }
 */
export function extractFeatures(set: PolygonSet, dbuUm: number, opts: FeatureOptions = {}): Feature[] {
  return featureList(extractFeatureTable(set, dbuUm, opts));
}

/** `extractFeatures` as a column table. */
export function extractFeatureTable(set: PolygonSet, dbuUm: number, opts: FeatureOptions = {}): FeatureTable {
  return featureTableFromRegions(openRegions(set, dbuUm, { polarity: opts.polarity, regionDbu: opts.regionDbu, tileDbu: opts.tileDbu }), opts);
}

/** An axis-aligned rectangle cut into tile pieces: every edge axis-aligned and the area fills the bbox (no merge needed). */
function isBoxFilled(c: Float64Array, rings: [number, number][], bbox: Box, area: number): boolean {
  const full = (bbox[2] - bbox[0]) * (bbox[3] - bbox[1]);
  if (Math.abs(area - full) > 1e-9 * full) return false;
  for (const [s, e] of rings) {
    for (let k = s; k < e; k++) {
      const n = k + 1 < e ? k + 1 : s;
      if (c[2 * k] !== c[2 * n] && c[2 * k + 1] !== c[2 * n + 1]) return false;
    }
  }
  return true;
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
