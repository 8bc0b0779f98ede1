/**
 * Exact widths of a Manhattan (axis-parallel) opening on its compressed lattice (manhattan-lines.ts), whatever grid
 * its vertices lie on. Definitions as in widths.ts (maxWidth, self-centred centres, minWidth).
 *
 * - D at the nodes (manhattan-distance.ts): the squared Euclidean distance transform to the non-interior nodes, by
 *   Felzenszwalb & Huttenlocher's lower envelope of parabolas, which works on arbitrary sample positions (P.
 *   Felzenszwalb, D. Huttenlocher, "Distance Transforms of Sampled Functions", Theory of Computing 8, 2012): exact,
 *   since every node's nearest boundary point is a non-interior node.
 * - minWidth (manhattan-cover.ts): nodes in increasing D; the first one that no node with a larger disk covers and
 *   that is a true local maximum of D (ridge-snap.ts isLocalMaximum, on the exact edges) is self-centred, its 2·D the
 *   answer. A centre that
 *   is not a local maximum is never self-centred (a point a little uphill has a larger disk containing it), so that
 *   test only removes nodes whose covering disk is centred between nodes (near a convex corner or an off-lattice
 *   medial-axis vertex, where a non-uniform lattice may have no covering node). The self-centred points of a
 *   Manhattan opening are plateaus of D (trench midlines, nodes by construction, with lines where they end and where
 *   the coverage from a wider region stops) and isolated medial-axis vertices, which are larger than the arms
 *   around them in the shapes tested.
 * - maxWidth (manhattan-maxima.ts): the largest node D, and the pattern search with ridge snap (disk-search.ts
 *   climbToMaximum) from the largest corner of every lattice cell whose Lipschitz bound (largest corner D + half the diagonal, or where the
 *   corner cones meet) beats the best so far, largest bound first, at most MAX_CLIMBS climbs (a medial-axis vertex at
 *   reflex corners lies between nodes).
 *
 * Every buffer is module scratch reused from opening to opening (no arrays allocated per opening).
 */
import { smallestSelfCentred } from './manhattan-cover';
import { distanceTransform, interiorMask, rowHi, rowLo } from './manhattan-distance';
import type { ManhattanLines } from './manhattan-lines';
import { largestDisk } from './manhattan-maxima';

let rootS = new Float64Array(0), rowMaxS = new Float64Array(0);
let candS = new Int32Array(0), topS = new Uint8Array(0), maximalS = new Uint8Array(0);

/** minWidth and maxWidth (dbu) of the opening whose exact edges are `edges` (edgeList form), on lattice L. */
export function manhattanWidths(L: ManhattanLines, edges: Float64Array): { minWidth: number; maxWidth: number } | null {
  const { xs, ys, nx, ny } = L;
  const nodes = nx * ny;
  const mask = interiorMask(L);
  const d2 = distanceTransform(mask, xs, ys, nx, ny);
  if (rootS.length < nodes) rootS = new Float64Array(Math.max(nodes, 2 * rootS.length));
  if (rowMaxS.length < ny) rowMaxS = new Float64Array(2 * ny);
  const root = rootS.fill(0, 0, nodes), rowMax = rowMaxS;
  // D at the interior nodes (0 elsewhere), its largest value per row and overall.
  let best = 0;
  for (let j = 0; j < ny; j++) {
    let rm = 0;
    for (let i = rowLo[j] as number, i1 = rowHi[j] as number; i <= i1; i++) {
      const q = j * nx + i;
      if (!mask[q]) continue;
      const r = Math.sqrt(d2[q] as number);
      root[q] = r;
      if (r > rm) rm = r;
    }
    rowMax[j] = rm;
    if (rm > best) best = rm;
  }
  if (!(best > 0) || best === Infinity) return null;
  // Maximal centres: interior nodes whose disk is not inside a neighbour's (D(n) ≥ D(c) + |n − c|); the others are
  // covered by that neighbour and never set a width. Also marks which are local maxima of the lattice (≥ neighbours).
  if (candS.length < nodes) {
    candS = new Int32Array(Math.max(nodes, 2 * candS.length));
    topS = new Uint8Array(candS.length);
    maximalS = new Uint8Array(candS.length);
  }
  const maximal = maximalS.fill(0, 0, nodes);
  let m = 0;
  for (let j = 1; j + 1 < ny; j++) {
    const yj = ys[j] as number, dyl = yj - (ys[j - 1] as number), dyu = (ys[j + 1] as number) - yj;
    for (let i = Math.max(1, rowLo[j] as number), i1 = Math.min(nx - 2, rowHi[j] as number); i <= i1; i++) {
      const q = j * nx + i;
      const dc = root[q] as number;
      if (dc === 0) continue;
      const xi = xs[i] as number, dxl = xi - (xs[i - 1] as number), dxr = (xs[i + 1] as number) - xi;
      const lim = dc - 1e-9 * (1 + dc);
      const l = root[q - 1] as number, r = root[q + 1] as number, b = root[q - nx] as number, t = root[q + nx] as number;
      if (l >= lim + dxl || r >= lim + dxr || b >= lim + dyl || t >= lim + dyu) continue;
      const bl = root[q - nx - 1] as number, br = root[q - nx + 1] as number, tl = root[q + nx - 1] as number, tr = root[q + nx + 1] as number;
      if (bl >= lim + Math.sqrt(dxl * dxl + dyl * dyl) || br >= lim + Math.sqrt(dxr * dxr + dyl * dyl) || tl >= lim + Math.sqrt(dxl * dxl + dyu * dyu) || tr >= lim + Math.sqrt(dxr * dxr + dyu * dyu)) continue;
      topS[m] = l > dc || r > dc || b > dc || t > dc || bl > dc || br > dc || tl > dc || tr > dc ? 0 : 1;
      maximal[q] = 1;
      candS[m++] = q;
    }
  }
  const maxD = largestDisk(L, edges, root, best, rowMax, rowLo, rowHi, maximal);
  const minD = smallestSelfCentred(L, edges, root, candS, m, topS, maxD);
  return { minWidth: 2 * minD, maxWidth: 2 * maxD };
}
