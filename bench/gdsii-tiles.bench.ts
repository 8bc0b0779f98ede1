/**
 * Streaming read of a GDSII file larger than we would like in memory: a flat die of TILE_BENCH_POLYGONS
 * (default 5 000 000) rectangles is written to the OS temp folder in pieces (never whole in memory), then a child
 * process indexes it (openGdsiiTileSource) and reads it as a grid of tiles. Prints index time and MB/s, index
 * bytes per element, peak RSS against the file size, and per-tile read times. A measurement, not a test.
 */
import { execFileSync } from 'node:child_process';
import { closeSync, mkdtempSync, openSync, rmSync, statSync, writeFileSync, writeSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { GdsiiWriter } from '../lib/layout/gdsii-writer';
import { readLayoutFile } from '../lib/layout/read';

const POLYGONS = Number(process.env.TILE_BENCH_POLYGONS ?? 5_000_000);
const GRID = 8;

/** Rectangles on a jittered lattice over ~ 20 mm × 20 mm (dbu 1 nm), two layers; written in 1 MB pieces. */
function writeFlat(file: string, n: number): void {
  const fd = openSync(file, 'w');
  try {
    const w = new GdsiiWriter({ libraryName: 'KESTREL3_FULL' });
    w.beginCell('DIE');
    const side = Math.ceil(Math.sqrt(n));
    const pitch = Math.floor(20_000_000 / side);
    let seed = 12345;
    const rnd = () => ((seed = (seed * 1103515245 + 12345) >>> 0) / 4294967296);
    for (let k = 0; k < n; k++) {
      const x = (k % side) * pitch + Math.floor(rnd() * pitch * 0.3);
      const y = Math.floor(k / side) * pitch + Math.floor(rnd() * pitch * 0.3);
      w.rect(k % 7 === 0 ? 2 : 1, 0, x, y, x + 200 + Math.floor(rnd() * pitch * 0.5), y + 200 + Math.floor(rnd() * pitch * 0.5));
      if ((k & 0x3fff) === 0) writeSync(fd, w.drain());
    }
    w.endCell();
    writeSync(fd, w.finish());
  } finally {
    closeSync(fd);
  }
}

interface ChildResult {
  fileBytes: number; elements: number; headerPolygons: number; indexS: number; indexBytes: number; rssBefore: number;
  peakRssAfterIndex: number; peakRssAfterTiles: number; tiles: number; tilePolygons: number; tileMsMedian: number;
  tileMsMax: number; tilesS: number; heapAfterTiles: number; arrayBuffersAfterTiles: number; arrayBuffersAfterGc: number; stats: { bytesRead: number; elementsDecoded: number };
}

/** 1M flattened vias from a small file: four blocks of a 500 × 500 AREF, one block rotated by 30° (header walked). */
function writeHierarchical(file: string): void {
  const w = new GdsiiWriter({ libraryName: 'KESTREL3_ARRAYS' });
  w.beginCell('DIE');
  w.sref('BLOCK', 0, 0).sref('BLOCK', 6_000_000, 0).sref('BLOCK', 0, 6_000_000).sref('BLOCK', 9_000_000, 6_000_000, { angleDeg: 30 });
  w.endCell();
  w.beginCell('BLOCK').aref('VIA', 500, 500, [0, 0], [5_000_000, 0], [0, 5_000_000]).endCell();
  w.beginCell('VIA').rect(1, 0, 0, 0, 5000, 5000).endCell();
  writeFileSync(file, w.finish());
}

function runChild(file: string): ChildResult {
  const out = execFileSync(process.execPath, ['--expose-gc', ...process.execArgv, join(import.meta.dirname, 'gdsii-tiles-child.ts'), file, String(GRID)], { encoding: 'utf8', maxBuffer: 1 << 20 });
  return JSON.parse(out.trim().split('\n').pop() as string) as ChildResult;
}

const MB = (b: number) => (b / 1e6).toFixed(0);

export default async function (): Promise<void> {
  const dir = mkdtempSync(join(tmpdir(), 'trenchant-tiles-bench-'));
  try {
    const file = join(dir, 'flat.gds');
    const t0 = performance.now();
    writeFlat(file, POLYGONS);
    const mb = statSync(file).size / 1e6;
    console.log(`flat: wrote ${POLYGONS} rectangles, ${mb.toFixed(0)} MB in ${((performance.now() - t0) / 1000).toFixed(1)} s (streamed, writer peak RSS ${(process.resourceUsage().maxRSS / 1024).toFixed(0)} MB)`);
    const r = runChild(file);
    console.log(`flat index: ${r.indexS.toFixed(2)} s = ${(mb / r.indexS).toFixed(0)} MB/s, ${(r.elements / r.indexS / 1e6).toFixed(2)} M elements/s`);
    console.log(`flat index memory: ${MB(r.indexBytes)} MB for ${r.elements} elements = ${(r.indexBytes / r.elements).toFixed(1)} B/element`);
    console.log(`flat peak RSS: ${MB(r.peakRssAfterIndex)} MB after indexing, ${MB(r.peakRssAfterTiles)} MB after all tiles (process start ${MB(r.rssBefore)} MB), file ${mb.toFixed(0)} MB → ${(r.peakRssAfterTiles / 1e6 / mb).toFixed(2)}× the file; after the tiles: JS heap ${MB(r.heapAfterTiles)} MB, array buffers ${MB(r.arrayBuffersAfterTiles)} MB (${MB(r.arrayBuffersAfterGc)} MB after a full GC, the rest was garbage not yet collected)`);
    console.log(`flat tiles: ${r.tiles} (${GRID}×${GRID}) in ${r.tilesS.toFixed(2)} s, median ${r.tileMsMedian.toFixed(0)} ms, max ${r.tileMsMax.toFixed(0)} ms per tile; ${r.tilePolygons} polygons returned (header: ${r.headerPolygons}; crossing polygons count once per tile), ${MB(r.stats.bytesRead)} MB read back, ${r.stats.elementsDecoded} elements decoded`);
    rmSync(file);

    const hier = join(dir, 'hier.gds');
    writeHierarchical(hier);
    const h = runChild(hier);
    const t1 = performance.now();
    const whole = await readLayoutFile(hier);
    const wholeS = (performance.now() - t1) / 1000;
    console.log(`hierarchical (${whole.layers[0]?.count} vias, ${(statSync(hier).size / 1e3).toFixed(1)} kB): index + header ${h.indexS.toFixed(2)} s (whole-file read + flatten ${wholeS.toFixed(2)} s); ${h.tiles} tiles in ${h.tilesS.toFixed(2)} s, median ${h.tileMsMedian.toFixed(0)} ms, max ${h.tileMsMax.toFixed(0)} ms; ${h.tilePolygons} polygons returned; peak RSS ${MB(h.peakRssAfterTiles)} MB`);
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}
