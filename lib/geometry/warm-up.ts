/**
 * JIT warm-up for a fresh helper thread: a small seeded union (overlapping rectangles and 24-gons, so clipper's
 * sweep, the fast paths and the seam code all run) and its raster, computed once and thrown away. A new thread's
 * isolate starts with cold code; without this, its share of a big union runs unoptimised for its first few hundred
 * milliseconds (measured: the two-thread union then cost ≈ 1 s more CPU than one thread). It runs while the
 * analysis thread reads the layout, when the helper has nothing else to do. No result is kept.
 */
import { mulberry32 } from '../random';
import { planUnion } from './open-regions';
import { rasterBand } from './parallel-raster';
import { joinUnionChunks, unionChunk } from './parallel-union';

export function warmUpGeometry(): void {
  const rnd = mulberry32(1);
  const coords: number[] = [];
  const offsets: number[] = [0];
  for (let k = 0; k < 3_000; k++) {
    const x = Math.floor(rnd() * 300_000), y = Math.floor(rnd() * 300_000);
    if (k % 8 === 0) for (let q = 0; q < 24; q++) coords.push(Math.round(x + 900 * Math.cos((q * Math.PI) / 12)), Math.round(y + 900 * Math.sin((q * Math.PI) / 12)));
    else coords.push(x, y, x + 500 + Math.floor(rnd() * 6_000), y, x + 500 + Math.floor(rnd() * 6_000), y + 400 + Math.floor(rnd() * 1_500), x, y + 400 + Math.floor(rnd() * 1_500));
    offsets.push(coords.length / 2);
  }
  const set = { layer: 0, datatype: 0, coords: Float64Array.from(coords), offsets: Uint32Array.from(offsets), count: offsets.length - 1 };
  const plan = planUnion(set, { tileDbu: 10_000 });
  if ('empty' in plan) return;
  const tiles = plan.ntx * plan.nty;
  const regions = joinUnionChunks([unionChunk(set, plan, 0, tiles >> 1), unionChunk(set, plan, tiles >> 1, tiles)], 0.001, plan);
  const grid = { x0Um: 0, y0Um: 0, pixelUm: 2, nx: 160, ny: 160 };
  rasterBand(regions, grid, 40, 120, new Float32Array(grid.nx * grid.ny));
}
