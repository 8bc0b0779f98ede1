/**
 * The on-disk GDSII tile source against the whole-file reader (readLayoutFile + flatten, itself checked against
 * gdspy in gdspy-fixtures.test.ts) and the in-memory reference source (the TileSource contract): same header, same
 * polygons per tile as multisets of canonical rings, the tiles together give back the whole layout, same errors.
 * Outside reference: gdspy (Debian python3-gdspy) reads a generated hierarchical file; its polygon counts and summed
 * polygon areas per layer must equal ours.
 */
import { execFileSync } from 'node:child_process';
import { mkdtempSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import fc from 'fast-check';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { LayoutReadError } from '@/lib/layout/errors';
import { GdsiiWriter } from '@/lib/layout/gdsii-writer';
import { cellBounds } from '@/lib/layout/cell-bounds';
import { indexBytes } from '@/lib/layout/gdsii-index';
import { openGdsiiTileSource, type GdsiiTileSourceOptions } from '@/lib/layout/gdsii-tile-source';
import { readLayoutFile } from '@/lib/layout/read';
import { openLayoutTileSource } from '@/lib/layout/open-tile-source';
import { inMemoryTileSource, type TileSourceHeader } from '@/lib/layout/tile-source';
import type { BboxDbu } from '@/lib/layout/bbox';
import type { FlatLayout } from '@/lib/layout/types';
import { summedArea } from './helpers';
import { apply, mutation } from './mutations';
import { allLayers, flatDie, hierarchicalDie, polygonsOf, rng, tileGrid } from './tile-fixtures';

const root = fileURLToPath(new URL('../../', import.meta.url));
const fixtures = join(root, 'tests/fixtures/gds');
let dir = '';

beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'trenchant-tiles-'));
  writeFileSync(join(dir, 'hier.gds'), hierarchicalDie());
  writeFileSync(join(dir, 'flat.gds'), flatDie(20_000)); // more than one decode batch (16 384 elements)
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const files = () => [
  join(dir, 'hier.gds'), join(dir, 'flat.gds'),
  ...readdirSync(join(root, 'samples')).filter((f) => f.endsWith('.gds')).map((f) => join(root, 'samples', f)),
  ...readdirSync(fixtures).filter((f) => f.endsWith('.gds')).map((f) => join(fixtures, f)),
];

/** Every tile equals the reference tile; owned polygons over the grid give back the whole layout exactly. */
function checkTiles(whole: FlatLayout, file: string, nx: number, ny: number, grow = 0, opts: GdsiiTileSourceOptions = {}): void {
  const src = openGdsiiTileSource(file, opts);
  const ref = inMemoryTileSource(whole);
  try {
    expect(src.header).toEqual(ref.header);
    if (!whole.bboxDbu) return;
    const [x0, y0, x1, y1] = whole.bboxDbu;
    const layers = allLayers(src);
    const union: string[] = [];
    for (const t of tileGrid([x0 - grow, y0 - grow, x1 + grow, y1 + grow], nx, ny)) {
      const got = src.readTile(t.box, layers);
      expect(polygonsOf(got), `${file} tile ${t.box.join(',')}`).toEqual(polygonsOf(ref.readTile(t.box, layers)));
      union.push(...polygonsOf(got, t));
    }
    expect(union.sort()).toEqual(polygonsOf(whole));
  } finally {
    src.close();
  }
}

describe('openGdsiiTileSource', () => {
  it('matches the whole-file reader on every sample, fixture and generated file (5×4 grid, header, union)', async () => {
    for (const file of files()) checkTiles(await readLayoutFile(file), file, 5, 4);
  });

  it('matches on finer grids and on grids whose lines fall on polygon edges', async () => {
    const file = join(dir, 'hier.gds');
    const whole = await readLayoutFile(file);
    checkTiles(whole, file, 13, 11);
    checkTiles(whole, file, 1, 1, 10);
    const flat = await readLayoutFile(join(dir, 'flat.gds'));
    checkTiles(flat, join(dir, 'flat.gds'), 9, 7);
    checkTiles(flat, join(dir, 'flat.gds'), 1, 1, 10);
    // Byte offsets as float64, as for files of 8 GiB and more.
    checkTiles(whole, file, 7, 5, 0, { float64Offsets: true });
  });

  it('matches the reference for random boxes and layer subsets', async () => {
    const file = join(dir, 'hier.gds');
    const whole = await readLayoutFile(file);
    const src = openGdsiiTileSource(file);
    const ref = inMemoryTileSource(whole);
    const r = rng(3);
    const [x0, y0, x1, y1] = whole.bboxDbu as BboxDbu;
    try {
      for (let k = 0; k < 60; k++) {
        const ax = x0 + r() * (x1 - x0), ay = y0 + r() * (y1 - y0);
        const box: BboxDbu = [Math.floor(ax), Math.floor(ay), Math.floor(ax + r() * 80_000), Math.floor(ay + r() * 80_000)];
        const layers = allLayers(src).filter(() => r() < 0.5);
        expect(polygonsOf(src.readTile(box, layers)), box.join(',')).toEqual(polygonsOf(ref.readTile(box, layers)));
      }
      // A tile's bbox is that of what it returns.
      const t = src.readTile([100_000, 100_000, 140_000, 140_000], allLayers(src));
      expect(t.bboxDbu).toEqual(ref.readTile([100_000, 100_000, 140_000, 140_000], allLayers(src)).bboxDbu);
    } finally {
      src.close();
    }
  });

  it('computes the header bbox without geometry when placements are exact, equal to the flatten at .5 outlines', async () => {
    // Odd path widths put outline vertices on half dbu: snapping after reflection / rotation / magnification must
    // come out as in the whole-file flatten (Math.round of the placed value, not a placed rounded value).
    for (const [k, t] of [{}, { reflect: true }, { angleDeg: 90 }, { angleDeg: 180, reflect: true }, { mag: 2 }, { mag: 3, angleDeg: 270 }, { mag: 0.5 }].entries()) {
      const w = new GdsiiWriter();
      w.beginCell('TOP').sref('P', -7, 3, t).aref('P', 3, 2, [1000, 1000], [1000 + 3 * 555, 1000], [1000, 1000 + 2 * 333], t).endCell();
      w.beginCell('P').path(1, 0, [0, 0, 101, 0, 101, 77], 5, { pathtype: 2 }).path(2, 0, [3, 3, 3, 40], 7).endCell();
      const file = join(dir, `exact-${k}.gds`);
      writeFileSync(file, w.finish());
      const src = openGdsiiTileSource(file);
      const whole = await readLayoutFile(file);
      expect(src.header.bboxDbu, JSON.stringify(t)).toEqual(whole.bboxDbu);
      // Unit magnification keeps half-dbu outlines exact; other magnifications are walked.
      expect(cellBounds(src.index).exactOk[src.index.top], JSON.stringify(t)).toBe((t.mag ?? 1) === 1 ? 1 : 0);
      src.close();
    }
    // Integer magnification over integer geometry stays exact.
    const w = new GdsiiWriter();
    w.beginCell('TOP').sref('R', 5, 5, { mag: 3, angleDeg: 90 }).aref('R', 4, 4, [0, 0], [400, 0], [0, 400], { mag: 2, reflect: true }).endCell();
    w.beginCell('R').rect(1, 0, -3, -4, 17, 9).endCell();
    const file = join(dir, 'exact-int.gds');
    writeFileSync(file, w.finish());
    const src = openGdsiiTileSource(file);
    expect(src.header.bboxDbu).toEqual((await readLayoutFile(file)).bboxDbu);
    expect(cellBounds(src.index).exactOk[src.index.top]).toBe(1);
    src.close();
  });

  it('reads only the elements a tile needs from a large flat cell (bucket index)', async () => {
    const src = openGdsiiTileSource(join(dir, 'flat.gds'));
    try {
      const before = src.stats().elementsDecoded;
      src.readTile([0, 0, 50_000, 50_000], allLayers(src));
      const used = src.stats().elementsDecoded - before;
      // 20 001 elements over 1e6 × 8e5 dbu: a 50 000² tile holds about 0.3 %; buckets may add neighbours, not the file.
      expect(used).toBeGreaterThan(0);
      expect(used).toBeLessThan(1000);
      // What the index keeps per element: 4-byte half offset + 16-byte bbox, plus the bucket grid (our design target).
      const { bytes, elements } = indexBytes(src.index);
      expect(elements).toBe(20_001);
      expect(bytes / elements).toBeLessThan(22);
    } finally {
      src.close();
    }
  });

  it('refuses a tile above its polygon cap with "too-large" and stays usable', () => {
    const src = openGdsiiTileSource(join(dir, 'flat.gds'), { maxPolygons: 100 });
    try {
      expect(() => src.readTile([0, 0, 1_000_000, 800_000], allLayers(src))).toThrow(/holds more than 100 polygons/);
      expect(src.readTile([0, 0, 10_000, 10_000], allLayers(src)).layers.length).toBeGreaterThanOrEqual(0);
    } finally {
      src.close();
    }
  });
});

const limits = { maxPolygons: 200_000, maxPoints: 2_000_000 };
let lastWhole: FlatLayout | null = null;
let lastHeader: TileSourceHeader | null = null;

async function wholeOutcome(file: string): Promise<string> {
  lastWhole = null;
  try {
    lastWhole = await readLayoutFile(file, limits);
    return 'ok';
  } catch (e) {
    if (e instanceof LayoutReadError) return `${e.code}@${e.offset}`;
    throw e;
  }
}

function tileOutcome(file: string): string {
  lastHeader = null;
  try {
    const src = openGdsiiTileSource(file, { maxLayoutPolygons: limits.maxPolygons, maxLayoutPoints: limits.maxPoints });
    lastHeader = src.header;
    src.close();
    return 'ok';
  } catch (e) {
    if (e instanceof LayoutReadError) return `${e.code}@${e.offset}`;
    throw e;
  }
}

describe('openLayoutTileSource', () => {
  it('indexes GDSII on disk and serves a polygon CSV from memory, with the whole-file header either way', async () => {
    const gds = await openLayoutTileSource(join(dir, 'hier.gds'));
    expect('index' in gds).toBe(true);
    expect(gds.header).toEqual(inMemoryTileSource(await readLayoutFile(join(dir, 'hier.gds'))).header);
    gds.close();
    const csvFile = join(root, 'samples/mems-die-excerpt.csv');
    const csv = await openLayoutTileSource(csvFile);
    expect('index' in csv).toBe(false);
    expect(csv.header).toEqual(inMemoryTileSource(await readLayoutFile(csvFile)).header);
    const png = join(dir, 'image.gds');
    writeFileSync(png, Uint8Array.from([0x89, 0x50, 0x4e, 0x47, ...new Array(80).fill(7)]));
    await expect(openLayoutTileSource(png)).rejects.toMatchObject({ code: 'not-gdsii', offset: 0 });
  });

  it('refuses to read tiles once the file has changed after indexing', () => {
    const file = join(dir, 'changing.gds');
    writeFileSync(file, flatDie(300));
    const src = openGdsiiTileSource(file);
    writeFileSync(file, flatDie(400));
    expect(() => src.readTile([0, 0, 1000, 1000], allLayers(src))).toThrow(/changed while it was being read/);
    src.close();
  });
});

describe('bad input', () => {
  it('gives the whole-file reader\'s error code and byte offset for hand-made faults', async () => {
    const good = new GdsiiWriter().beginCell('TOP').rect(1, 0, 0, 0, 10, 10).sref('SUB', 0, 0).endCell().beginCell('SUB').rect(1, 0, 0, 0, 5, 5).endCell().finish();
    const missing = new GdsiiWriter().beginCell('TOP').sref('NOWHERE', 0, 0).endCell().finish();
    const cycle = new GdsiiWriter().beginCell('A').sref('B', 0, 0).endCell().beginCell('B').sref('A', 0, 0).endCell().finish();
    const cases: [string, Uint8Array, string][] = [
      ['empty', new Uint8Array(0), 'empty@0'],
      ['png', Uint8Array.from([0x89, 0x50, 0x4e, 0x47, ...new Array(80).fill(7)]), 'not-gdsii@0'],
      ['cut', good.subarray(0, good.length - 30), ''],
      ['missing cell', missing, ''],
      ['cycle', cycle, ''],
    ];
    for (const [name, bytes, want] of cases) {
      const f = join(dir, `bad-${name.replace(/ /g, '-')}.gds`);
      writeFileSync(f, bytes);
      const whole = await wholeOutcome(f);
      expect(whole).not.toBe('ok');
      if (want) expect(whole).toBe(want);
      expect(tileOutcome(f), name).toBe(whole);
    }
    expect(tileOutcome(join(dir, 'no-such-file.gds'))).toBe('io@undefined');
  });

  it('agrees with the whole-file reader on 300 mutated files (fast-check, fixed seed)', async () => {
    const base = hierarchicalDie(5);
    let n = 0;
    const seen = new Set<string>();
    await fc.assert(
      fc.asyncProperty(fc.array(mutation, { minLength: 1, maxLength: 3 }), async (muts) => {
        const f = join(dir, `mut-${n++ % 4}.gds`);
        writeFileSync(f, apply(base, muts));
        const whole = await wholeOutcome(f);
        expect(tileOutcome(f)).toBe(whole);
        if (lastWhole) expect(lastHeader).toEqual(inMemoryTileSource(lastWhole).header);
        seen.add(whole.replace(/@.*/, ''));
      }),
      { seed: 20261203, numRuns: 300 },
    );
    // The mutations reach both readable files and several kinds of error.
    expect(seen.has('ok')).toBe(true);
    expect(seen.size).toBeGreaterThanOrEqual(4);
  });
});

describe('outside reference: gdspy', () => {
  const py = '/usr/bin/python3';
  const script = join(root, 'tests/layout/gdspy_count_area.py');
  const haveGdspy = (() => {
    try {
      execFileSync(py, ['-c', 'import gdspy'], { stdio: 'ignore' });
      return true;
    } catch {
      return false;
    }
  })();
  if (!haveGdspy) console.warn('gdspy check skipped: /usr/bin/python3 cannot import gdspy (install Debian python3-gdspy)');

  it.skipIf(!haveGdspy)('gdspy (python3-gdspy) counts the same polygons and summed area per layer as the tiles together', async () => {
    // Manhattan paths only (type 0 and 2) and no BOX: gdspy's reader polygonises paths its own way and skips BOX.
    const w = new GdsiiWriter({ libraryName: 'VIADUCT_TSV' });
    w.beginCell('CHIP');
    w.rect(1, 0, 0, 0, 90_000, 4_000);
    w.sref('TSV', 10_000, 10_000, { angleDeg: 90 });
    w.sref('TSV', 40_000, 10_000, { reflect: true, mag: 2 });
    w.sref('TSV', 70_000, 30_000, { angleDeg: 30, mag: 1.5 });
    w.aref('TSV', 8, 5, [0, 60_000], [8 * 11_000, 60_000], [0, 60_000 + 5 * 9_000]);
    w.aref('TSV', 3, 3, [100_000, 0], [100_000 + 3 * 12_000, 3 * 4_000], [100_000 - 3 * 2_000, 3 * 12_000], { angleDeg: 180 });
    w.path(2, 0, [0, -5_000, 50_000, -5_000, 50_000, -20_000], 600, { pathtype: 2 });
    w.endCell();
    w.beginCell('TSV').rect(3, 0, 0, 0, 5_000, 5_000).boundary(4, 0, [0, 0, 3000, 0, 3000, 3000, 1500, 1500, 0, 3000]).path(2, 0, [0, 6_000, 4_000, 6_000], 400).endCell();
    const file = join(dir, 'gdspy.gds');
    writeFileSync(file, w.finish());

    const src = openGdsiiTileSource(file);
    const tiles: FlatLayout[] = [];
    const bb = src.header.bboxDbu as BboxDbu;
    for (const t of tileGrid(bb, 4, 3)) {
      const got = src.readTile(t.box, allLayers(src));
      // Keep each polygon once: in the tile that owns the lower-left corner of its bbox.
      const keep = new Set(polygonsOf(got, t));
      tiles.push({ ...got, layers: got.layers.map((s) => filterSet(s, keep)) });
    }
    src.close();
    const want = JSON.parse(execFileSync(py, [script, file], { encoding: 'utf8' })) as { layer: number; datatype: number; polygons: number; area: number }[];
    for (const g of want) {
      const count = tiles.reduce((n, t) => n + (t.layers.find((s) => s.layer === g.layer && s.datatype === g.datatype)?.count ?? 0), 0);
      const area = tiles.reduce((a, t) => a + summedArea(t, g.layer, g.datatype), 0);
      expect(count, `layer ${g.layer}/${g.datatype} polygon count (gdspy)`).toBe(g.polygons);
      // gdspy keeps unsnapped float vertices of rotated instances; ours are snapped to the dbu grid (≤ 0.5 dbu per vertex).
      expect(Math.abs(area - g.area) / g.area, `layer ${g.layer}/${g.datatype} area ${area} vs gdspy ${g.area}`).toBeLessThan(2e-4);
    }
    expect(want.length).toBe(src.header.layers.length);
  });
});

function filterSet(s: FlatLayout['layers'][number], keep: Set<string>): FlatLayout['layers'][number] {
  const coords: number[] = [];
  const offsets = [0];
  for (let p = 0; p < s.count; p++) {
    const one = { ...s, coords: s.coords.slice(2 * (s.offsets[p] as number), 2 * (s.offsets[p + 1] as number)), offsets: Uint32Array.of(0, (s.offsets[p + 1] as number) - (s.offsets[p] as number)), count: 1 };
    if (!keep.has(polygonsOf({ layers: [one] } as FlatLayout)[0] as string)) continue;
    coords.push(...one.coords);
    offsets.push(coords.length / 2);
  }
  return { ...s, coords: Float64Array.from(coords), offsets: Uint32Array.from(offsets), count: offsets.length - 1 };
}

