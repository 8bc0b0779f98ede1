/**
 * Child process of bench/gdsii-tiles.bench.ts, so its peak RSS is the tile source's alone: index the file, read an
 * n × n grid of tiles on every layer, print one JSON line. Usage: tsx bench/gdsii-tiles-child.ts FILE N
 */
import { statSync } from 'node:fs';
import { indexBytes } from '../lib/layout/gdsii-index';
import { openGdsiiTileSource } from '../lib/layout/gdsii-tile-source';

const [file, nArg] = process.argv.slice(2) as [string, string];
const n = Number(nArg);
const size = statSync(file).size;
const rss0 = process.memoryUsage().rss;
const t0 = performance.now();
const src = openGdsiiTileSource(file);
const indexS = (performance.now() - t0) / 1000;
const rssIndex = process.resourceUsage().maxRSS * 1024;
const { bytes, elements } = indexBytes(src.index);
const [x0, y0, x1, y1] = src.header.bboxDbu ?? [0, 0, 0, 0];
const layers = src.header.layers.map((l) => ({ layer: l.layer, datatype: l.datatype }));
const times: number[] = [];
let polygons = 0;
for (let j = 0; j < n; j++) {
  for (let i = 0; i < n; i++) {
    const box: [number, number, number, number] = [x0 + ((x1 - x0) * i) / n, y0 + ((y1 - y0) * j) / n, x0 + ((x1 - x0) * (i + 1)) / n, y0 + ((y1 - y0) * (j + 1)) / n];
    const t = performance.now();
    const tile = src.readTile(box, layers);
    times.push(performance.now() - t);
    polygons += tile.layers.reduce((s, l) => s + l.count, 0);
  }
}
const abBeforeGc = process.memoryUsage().arrayBuffers;
(globalThis as { gc?: () => void }).gc?.();
src.close();
times.sort((a, b) => a - b);
console.log(JSON.stringify({
  fileBytes: size, elements, headerPolygons: src.header.layers.reduce((s, l) => s + l.polygons, 0),
  indexS, indexBytes: bytes, rssBefore: rss0, peakRssAfterIndex: rssIndex, peakRssAfterTiles: process.resourceUsage().maxRSS * 1024,
  tiles: n * n, tilePolygons: polygons, tileMsMedian: times[times.length >> 1], tileMsMax: times[times.length - 1], tilesS: times.reduce((a, b) => a + b, 0) / 1000,
  stats: src.stats(), heapAfterTiles: process.memoryUsage().heapUsed, arrayBuffersAfterTiles: abBeforeGc, arrayBuffersAfterGc: process.memoryUsage().arrayBuffers,
}));
