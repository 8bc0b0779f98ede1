/**
 * One job of a tiled analysis, synchronous and pure over a TileSource (runs on a worker thread, in a queue worker
 * or inline).
 *
 * A 'core' job reads its tile's region (core + margin), computes the exact union on the shared union lattice
 * (plan.ts), accumulates the coverage differences of its core pixels (raster.ts: bit-identical to the untiled
 * pass) and measures the openings it owns. An opening is owned by the tile whose core holds its lowest, then
 * leftmost vertex P. An opening is complete ("trusted") when its bbox stays strictly inside the region read on
 * every side that is not the layout's edge: all its pieces and seams are then inside, so it is measured from the
 * same pieces, in the same order, as the untiled run. An opening that reaches the region's edge with its (partial)
 * P in the core is returned as pending; a 'grow' job re-reads the tile with a doubled margin and measures it once
 * complete — only if this tile owns its true P (another tile may have reported a partial view of it). At the
 * layout's bbox every opening is complete, so this ends.
 *
 * Openings are named across jobs by a piece: (union lattice cell, rank of the piece in that cell). Pieces of a cell
 * come out the same in every job that reads the cell, so the name is stable; and (cell, rank) order is the untiled
 * union's piece order, which numberFeatures uses to break ties.
 *
 * Bit-for-bit equality with the untiled run also needs the source to return a tile's polygons in the whole-file
 * flatten order (inMemoryTileSource does): clipper's output rings, and so float sums over them, follow input order.
 * A source with another order still gives the same openings and coverage up to float rounding.
 */
import { openRegions, type OpenRegions } from '../../geometry/open-regions';
import { accumulateRegions, type AccWindow } from '../../geometry/raster';
import { featuresFromRegions } from '../../geometry/features';
import { featureTableOf, type FeatureTable } from '../../geometry/feature-table';
import { ringArea, ringMoments } from '../../geometry/ring';
import type { Box, Feature } from '../../geometry/types';
import type { TileSource } from '../../layout/tile-source';
import type { FlatLayout, PolygonSet } from '../../layout/types';
import { mergePolygonSets } from '../etch-layers';
import { boxRegion, coreBottomUm, isWholeRegion, ownsPoint, tileCore, tileRegion, type TilePlan } from './plan';

export interface TileJob {
  kind: 'core' | 'grow';
  /** The tile whose ownership rule applies (for grow: the tile that reported the opening). */
  tile: number;
  marginDbu: number;
  /** grow: pending openings, as (cell, rank) pairs, and the box (dbu) their partial views covered. */
  seeds?: number[];
  boxDbu?: Box;
}

/** Numbers per pending opening in TileJobResult.pending: cell, rank, then its partial bbox (dbu). */
export const PENDING_SIZE = 6;

export interface TileJobResult {
  kind: 'core' | 'grow';
  tile: number;
  marginDbu: number;
  regionDbu: Box;
  /** core: the core's block of coverage differences. */
  win?: AccWindow;
  acc?: Float64Array;
  /** Owned, complete openings, in this job's id order. */
  features: FeatureTable;
  /** Per feature: the (cell, rank) of its first piece in the untiled piece order. */
  keys: number[];
  /** Openings that reached the region's edge, PENDING_SIZE numbers each: re-read around them with a larger margin. */
  pending: number[];
  stats: { polygons: number; pieces: number; ms: { read: number; union: number; raster: number; features: number } };
}

/** The etch layers of a tile, merged in settings order (as selectEtchLayers does for the whole layout). */
function etchSet(layout: FlatLayout, refs: TilePlan['etchLayers']): PolygonSet {
  const sets: PolygonSet[] = [];
  for (const ref of refs) {
    const s = layout.layers.find((l) => l.layer === ref.layer && l.datatype === ref.datatype);
    if (s && s.count > 0) sets.push(s);
  }
  if (sets.length === 0) return { layer: refs[0]?.layer ?? 0, datatype: refs[0]?.datatype ?? 0, coords: new Float64Array(0), offsets: new Uint32Array(1), count: 0 };
  return sets.length === 1 ? (sets[0] as PolygonSet) : mergePolygonSets(sets);
}

function find(parent: Uint32Array, a: number): number {
  while (parent[a] !== a) {
    parent[a] = parent[parent[a] as number] as number;
    a = parent[a] as number;
  }
  return a;
}

export function runTileJob(source: TileSource, plan: TilePlan, job: TileJob, onSample?: () => void): TileJobResult {
  const t0 = performance.now();
  const R = job.kind === 'grow' && job.boxDbu ? boxRegion(plan, job.boxDbu, job.marginDbu) : tileRegion(plan, job.tile, job.marginDbu);
  const whole = isWholeRegion(plan, R);
  const set = etchSet(source.readTile(R, plan.etchLayers), plan.etchLayers);
  const t1 = performance.now();
  onSample?.();
  const regions = openRegions(set, plan.dbuUm, { polarity: plan.polarity, regionDbu: R, tileDbu: plan.latticeDbu });
  const t2 = performance.now();
  onSample?.();
  let win: AccWindow | undefined, acc: Float64Array | undefined;
  if (job.kind === 'core') {
    const c = tileCore(plan, job.tile);
    win = { i0: c.i0, j0: c.j0, nx: c.i1 - c.i0, ny: c.j1 - c.j0 };
    acc = accumulateRegions(regions, plan.grid, win);
  }
  const t3 = performance.now();
  const { features, keys, pending } = ownedOpenings(regions, plan, job, R, whole);
  const t4 = performance.now();
  onSample?.();
  const ms = (a: number, b: number) => Math.round((b - a) * 10) / 10;
  return {
    kind: job.kind,
    tile: job.tile,
    marginDbu: job.marginDbu,
    regionDbu: R,
    ...(win && acc ? { win, acc } : {}),
    features: featureTableOf(features),
    keys,
    pending,
    stats: { polygons: set.count, pieces: regions.pieceCount, ms: { read: ms(t0, t1), union: ms(t1, t2), raster: ms(t2, t3), features: ms(t3, t4) } },
  };
}

function ownedOpenings(regions: OpenRegions, plan: TilePlan, job: TileJob, R: Box, whole: boolean): { features: Feature[]; keys: number[]; pending: number[] } {
  const n = regions.pieceCount;
  const parent = new Uint32Array(n);
  for (let p = 0; p < n; p++) parent[p] = p;
  for (let s = 0; s < regions.seamA.length; s++) {
    const a = find(parent, regions.seamA[s] as number), b = find(parent, regions.seamB[s] as number);
    if (a !== b) parent[Math.max(a, b)] = Math.min(a, b);
  }
  // Per piece: lattice cell (from its outer ring's lower-left; a piece lies inside its cell) and rank in the cell.
  const G = plan.regionDbu, L = plan.latticeDbu;
  const cell = new Float64Array(n), rank = new Uint32Array(n);
  const seen = new Map<number, number>();
  // Per root: bbox and lowest-then-leftmost vertex.
  const bx0 = new Float64Array(n).fill(Infinity), by0 = new Float64Array(n).fill(Infinity);
  const bx1 = new Float64Array(n).fill(-Infinity), by1 = new Float64Array(n).fill(-Infinity);
  const px = new Float64Array(n).fill(Infinity), py = new Float64Array(n).fill(Infinity);
  const c = regions.coords;
  for (let p = 0; p < n; p++) {
    const r = find(parent, p);
    const outerS = regions.ringOffsets[regions.pieceRings[p] as number] as number, outerE = regions.ringOffsets[(regions.pieceRings[p] as number) + 1] as number;
    let ox = Infinity, oy = Infinity;
    for (let k = outerS; k < outerE; k++) {
      if ((c[2 * k] as number) < ox) ox = c[2 * k] as number;
      if ((c[2 * k + 1] as number) < oy) oy = c[2 * k + 1] as number;
    }
    const gi = Math.min(plan.latticeNx - 1, Math.max(0, Math.floor((ox - G[0]) / L)));
    const gj = Math.min(plan.latticeNy - 1, Math.max(0, Math.floor((oy - G[1]) / L)));
    cell[p] = gj * plan.latticeNx + gi;
    const k0 = seen.get(cell[p] as number) ?? 0;
    rank[p] = k0;
    seen.set(cell[p] as number, k0 + 1);
    for (let q = regions.pieceRings[p] as number; q < (regions.pieceRings[p + 1] as number); q++) {
      for (let k = regions.ringOffsets[q] as number; k < (regions.ringOffsets[q + 1] as number); k++) {
        const x = c[2 * k] as number, y = c[2 * k + 1] as number;
        if (x < (bx0[r] as number)) bx0[r] = x;
        if (x > (bx1[r] as number)) bx1[r] = x;
        if (y > (by1[r] as number)) by1[r] = y;
        if (y < (by0[r] as number)) by0[r] = y;
        if (y < (py[r] as number) || (y === py[r] && x < (px[r] as number))) {
          py[r] = y;
          px[r] = x;
        }
      }
    }
  }
  const complete = (r: number) =>
    whole ||
    (((bx0[r] as number) > R[0] || R[0] <= G[0]) &&
      ((by0[r] as number) > R[1] || R[1] <= G[1]) &&
      ((bx1[r] as number) < R[2] || R[2] >= G[2]) &&
      ((by1[r] as number) < R[3] || R[3] >= G[3]));
  const u = plan.dbuUm;
  const owns = (r: number) => ownsPoint(plan, job.tile, (px[r] as number) * u, (py[r] as number) * u);
  // The true lowest vertex is at or below a partial view's: a partial view reaching below the core is not ours.
  const belowCore = (r: number) => (py[r] as number) * u < coreBottomUm(plan, job.tile);
  const roots: number[] = [];
  if (job.kind === 'core') {
    for (let p = 0; p < n; p++) if (find(parent, p) === p) roots.push(p);
  } else {
    const byName = new Map<string, number>();
    for (let p = 0; p < n; p++) byName.set(`${cell[p]}:${rank[p]}`, p);
    const set = new Set<number>();
    const seeds = job.seeds ?? [];
    for (let k = 0; k + 1 < seeds.length; k += 2) {
      const p = byName.get(`${seeds[k]}:${seeds[k + 1]}`);
      // The region only grew, so every piece read before is read again, the same: a miss means the source changed.
      if (p === undefined) throw new Error(`tile ${job.tile}: piece ${seeds[k]}:${seeds[k + 1]} of a pending opening is missing after re-reading; the tile source is not stable`);
      set.add(find(parent, p));
    }
    roots.push(...[...set].sort((a, b) => a - b));
  }
  const measure = new Uint8Array(n);
  const pending: number[] = [];
  for (const r of roots) {
    if (complete(r)) {
      if (owns(r)) measure[r] = 1;
    } else if (owns(r) || (job.kind === 'grow' && !belowCore(r))) pending.push(cell[r] as number, rank[r] as number, bx0[r] as number, by0[r] as number, bx1[r] as number, by1[r] as number);
  }
  const sub = keepPieces(regions, parent, measure);
  if (sub.regions.pieceCount === 0) return { features: [], keys: [], pending };
  const features = featuresFromRegions(sub.regions, { polarity: plan.polarity, regionDbu: plan.regionDbu });
  // A group's first piece in (cell, rank) order is its root in the untiled union; it breaks ties between openings
  // of different jobs with the same sort keys. Within one job the output order already equals the untiled order, so
  // tied openings (same bbox corner and centroid x) take their roots' keys in ascending order.
  const keyOf = new Map<string, number[]>();
  for (const r of sub.roots) {
    const a = sub.area.get(r) as number;
    if (!(a > 0)) continue;
    const id = `${(by0[r] as number) * u}|${(bx0[r] as number) * u}|${((sub.mx.get(r) as number) / a) * u}`;
    const list = keyOf.get(id) ?? [];
    list.push(cell[r] as number, rank[r] as number);
    keyOf.set(id, list);
  }
  const keys: number[] = [];
  for (const f of features) {
    const list = keyOf.get(`${f.bboxUm[1]}|${f.bboxUm[0]}|${f.centroidUm[0]}`);
    if (!list || list.length < 2) throw new Error(`tile ${job.tile}: opening at (${f.bboxUm[0]}, ${f.bboxUm[1]}) µm has no matching piece group`);
    keys.push(list.shift() as number, list.shift() as number);
  }
  return { features, keys, pending };
}

/**
 * The pieces of the chosen groups (and their seams), in their original order, so featuresFromRegions measures
 * exactly those openings from the same rings in the same order. Also each kept group's area and x moment, summed
 * as features.ts sums them (for matching features back to groups).
 */
function keepPieces(regions: OpenRegions, parent: Uint32Array, chosen: Uint8Array): { regions: OpenRegions; roots: number[]; area: Map<number, number>; mx: Map<number, number> } {
  const n = regions.pieceCount;
  const newIndex = new Int32Array(n).fill(-1);
  let pieces = 0, rings = 0, points = 0;
  const roots: number[] = [];
  for (let p = 0; p < n; p++) {
    const r = find(parent, p);
    if (!chosen[r]) continue;
    if (r === p) roots.push(r);
    newIndex[p] = pieces++;
    const q0 = regions.pieceRings[p] as number, q1 = regions.pieceRings[p + 1] as number;
    rings += q1 - q0;
    points += (regions.ringOffsets[q1] as number) - (regions.ringOffsets[q0] as number);
  }
  const coords = new Float64Array(2 * points);
  const ringOffsets = new Uint32Array(rings + 1);
  const pieceRings = new Uint32Array(pieces + 1);
  const area = new Map<number, number>(), mx = new Map<number, number>();
  let o = 0, q = 0;
  for (let p = 0; p < n; p++) {
    const np = newIndex[p] as number;
    if (np < 0) continue;
    const r = find(parent, p);
    for (let s = regions.pieceRings[p] as number; s < (regions.pieceRings[p + 1] as number); s++) {
      const a = regions.ringOffsets[s] as number, b = regions.ringOffsets[s + 1] as number;
      coords.set(regions.coords.subarray(2 * a, 2 * b), 2 * o);
      area.set(r, (area.get(r) ?? 0) + ringArea(coords, 2 * o, 2 * (o + b - a)));
      mx.set(r, (mx.get(r) ?? 0) + ringMoments(coords, 2 * o, 2 * (o + b - a))[0]);
      o += b - a;
      ringOffsets[++q] = o;
    }
    pieceRings[np + 1] = q;
  }
  const sa: number[] = [], sb: number[] = [], sl: number[] = [];
  for (let s = 0; s < regions.seamA.length; s++) {
    const a = newIndex[regions.seamA[s] as number] as number, b = newIndex[regions.seamB[s] as number] as number;
    if (a >= 0 && b >= 0) {
      sa.push(a);
      sb.push(b);
      sl.push(regions.seamLen[s] as number);
    }
  }
  return {
    roots,
    area,
    mx,
    regions: {
      ...regions,
      coords,
      ringOffsets,
      ringCount: rings,
      pieceRings,
      pieceCount: pieces,
      seamA: Uint32Array.from(sa),
      seamB: Uint32Array.from(sb),
      seamLen: Float64Array.from(sl),
      pieceCoverage: new Uint8Array(0),
      coverageCoords: new Float64Array(0),
      coverageRingOffsets: new Uint32Array(1),
    },
  };
}
