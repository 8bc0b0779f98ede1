/**
 * The tiled analysis with its openings spilled to disk and the per-opening stages streamed (tiled/spill.ts,
 * streamed-stages.ts) against the in-memory tiled run and the untiled runAnalysis: summary (without timings),
 * maps bit for bit, flags, and the feature file byte for byte (encodeFeatureFile of the untiled table). The
 * reference is the project's own untiled pipeline (checked against outside sources in run-analysis.test.ts and
 * tests/geometry); what is checked here is that spilling and chunking change nothing. Small chunks and a small flag
 * cap make the cross-chunk note numbering and the flag collector's row pruning do real work.
 */
import { spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, readdirSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import type { ProcessModel } from '@/lib/etch';
import { encodeFeatureFile, featureFileBytes } from '@/lib/jobs/feature-file';
import { readLayoutFile } from '@/lib/layout/read';
import { inMemoryTileSource } from '@/lib/layout/tile-source';
import type { FlatLayout } from '@/lib/layout/types';
import { runAnalysis, type AnalysisResult } from '@/lib/pipeline/run-analysis';
import { analysisSettingsSchema, type AnalysisSettings } from '@/lib/pipeline/settings';
import { runTiledAnalysis, type TiledAnalysisResult } from '@/lib/pipeline/tiled/run-tiled';
import { makeSet, mulberry32, ngon, rect, type Ring } from '../geometry/make-set';
import { testModel } from './fixtures';
import { sampleModel } from '../support/sample-model';

const dir = mkdtempSync(join(tmpdir(), 'spill-test-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

function sameExceptOpenings(a: AnalysisResult, b: AnalysisResult): void {
  const { timingsMs: _a, ...sa } = a.summary;
  const { timingsMs: _b, ...sb } = b.summary;
  expect(sa).toEqual(sb);
  expect(a.flags).toEqual(b.flags);
  expect(a.maps.map((m) => m.kind)).toEqual(b.maps.map((m) => m.kind));
  a.maps.forEach((m, k) => {
    const n = b.maps[k]!;
    expect(m.grid).toEqual(n.grid);
    expect(m.meta).toEqual(n.meta);
    expect(Buffer.from(m.values.buffer, m.values.byteOffset, m.values.byteLength).equals(Buffer.from(n.values.buffer, n.values.byteOffset, n.values.byteLength)), `map ${m.kind}`).toBe(true);
  });
}

/** Untiled, tiled in memory and tiled with a spill: all equal; returns the spilled run. */
async function threeWays(L: FlatLayout, s: AnalysisSettings, m: ProcessModel, tileUm: number, chunkRows: number): Promise<TiledAnalysisResult> {
  const whole = runAnalysis(L, s, m);
  const file = encodeFeatureFile(whole.featureTable);
  const memory = await runTiledAnalysis(inMemoryTileSource(L), s, m, { tileUm, spill: null });
  expect(memory.featureFile).toBeUndefined();
  sameExceptOpenings(memory, whole);
  expect(Buffer.from(featureFileBytes(encodeFeatureFile(memory.featureTable))).equals(Buffer.from(featureFileBytes(file)))).toBe(true);
  const featureFile = join(dir, `f-${Math.random().toString(36).slice(2)}.trfeat`);
  const spilled = await runTiledAnalysis(inMemoryTileSource(L), s, m, { tileUm, spill: { dir, minOpenings: 0, chunkRows, featureFile } });
  expect(spilled.featureFile).toMatchObject({ path: featureFile, count: whole.featureTable.count });
  expect(spilled.featureTable.count).toBe(0); // the rows are only in the file
  sameExceptOpenings(spilled, whole);
  const bytes = readFileSync(featureFile);
  expect(spilled.featureFile!.bytes).toBe(bytes.length);
  expect(bytes.equals(Buffer.from(featureFileBytes(file))), 'feature file bytes').toBe(true);
  // The spill's own folder is gone.
  expect(readdirSync(dir).filter((n) => n.startsWith('trenchant-spill-'))).toEqual([]);
  return spilled;
}

/** Seeded invented layout: holes, trenches across tile lines, 24-gons, 45° bars, rows of equal rectangles (ties on the lower edge), a serpentine wider than the margin. */
function generated(seed: number, dieUm: number, count: number): FlatLayout {
  const rnd = mulberry32(seed);
  const F = Math.floor, D = dieUm * 1000;
  const a: Ring[] = [];
  for (let k = 0; k < count; k++) {
    const x = F(rnd() * (D - 40_000)) + 5000, y = F(rnd() * (D - 40_000)) + 5000, u = rnd();
    if (u < 0.4) a.push(rect(x, y, x + 300 + F(rnd() * 2500), y + 300 + F(rnd() * 2500)));
    else if (u < 0.6) {
      const w = 400 + F(rnd() * 1000), len = 5000 + F(rnd() * 40_000);
      a.push(rnd() < 0.5 ? rect(x, y, Math.min(D, x + len), y + w) : rect(x, y, x + w, Math.min(D, y + len)));
    } else if (u < 0.75) a.push(ngon(x + 3000, y + 3000, 800 + F(rnd() * 1500), 24));
    else if (u < 0.85) {
      const L = 4000 + F(rnd() * 12_000), w = 1000;
      a.push([x, y, x + L, y + L, x + L - w, y + L + w, x - w, y + w]);
    } else {
      // A row of equal small holes on one lower edge, across several tiles.
      for (let i = 0; i < 12 && x + i * 9000 + 1000 < D; i++) a.push(rect(x + i * 9000, y, x + i * 9000 + 1000, y + 1000));
    }
  }
  const span = F(dieUm / 2) * 1000, rows = F(dieUm / 40);
  for (let k = 0; k < rows; k++) {
    const y = dieUm * 250 + k * 20_000;
    a.push(rect(dieUm * 250, y, dieUm * 250 + span, y + 2000));
    const xs = k % 2 === 0 ? dieUm * 250 + span - 2000 : dieUm * 250;
    if (k < rows - 1) a.push(rect(xs, y, xs + 2000, y + 22_000));
  }
  const die = makeSet([rect(0, 0, D, D)], 0, 0);
  return { format: 'csv', libraryName: 'spill-test', dbuUm: 0.001, userUnitUm: 1, topCell: '', cellCount: 0, labels: [], layers: [die, makeSet(a, 5, 0)], bboxDbu: [0, 0, D, D] };
}

const model = testModel();
const settingsOf = (extra: Record<string, unknown> = {}): AnalysisSettings =>
  analysisSettingsSchema.parse({ etchLayers: [{ layer: 5, datatype: 0 }], pixel: { sizeUm: 2 }, densityWindows: [{ windowUm: 100, stepUm: 50 }], ...extra });

describe('tiled with spill = tiled in memory = untiled', () => {
  it('generated layout, several tile sizes and chunk sizes, flag caps 3 to 200', async () => {
    const L = generated(31, 400, 2500);
    for (const [tileUm, chunk, cap] of [[40, 7, 3], [96, 1000, 200], [250, 64, 40]] as const) {
      const r = await threeWays(L, settingsOf({ maxListedFlags: cap }), model, tileUm, chunk);
      expect(r.tiled.growJobs).toBeGreaterThan(0);
      expect(r.featureFile!.count).toBeGreaterThan(1000);
      expect(r.summary.flags.total).toBeGreaterThan(cap);
      // Openings of different tile rows never interleave: the merge keeps about one tile row of runs open.
      expect(r.spillCursors).toBeLessThan(r.tiled.tiles);
    }
  }, 240_000);

  it('dark polarity and clipped windows', async () => {
    await threeWays(generated(32, 300, 1500), settingsOf({ polarity: 'dark', windowEdge: 'clipped' }), model, 90, 50);
  }, 120_000);

  for (const [file, layer, modelFile] of [
    ['mems-die.gds', 1, 'deep-trench-continuous.json'],
    ['tsv-test-chip.gds', 2, 'cyclic-via.json'],
  ] as const) {
    it(`sample ${file}`, async () => {
      const L = await readLayoutFile(`samples/${file}`);
      const s = analysisSettingsSchema.parse({ etchLayers: [{ layer, datatype: 0 }], maxListedFlags: 5 });
      const r = await threeWays(L, s, sampleModel(modelFile), 500, 100);
      expect(r.featureFile!.count).toBeGreaterThan(10);
    }, 120_000);
  }

  it('stays in memory below the threshold and spills at it; a failed run leaves no files', async () => {
    const L = generated(33, 200, 300);
    const s = settingsOf();
    const below = await runTiledAnalysis(inMemoryTileSource(L), s, model, { tileUm: 50, spill: { dir, minOpenings: 1_000_000 } });
    expect(below.featureFile).toBeUndefined();
    const at = await runTiledAnalysis(inMemoryTileSource(L), s, model, { tileUm: 50, spill: { dir, minOpenings: below.featureTable.count } });
    expect(at.featureFile?.count).toBe(below.featureTable.count);
    expect(existsSync(at.featureFile!.path)).toBe(true);
    rmSync(at.featureFile!.path);
    let calls = 0;
    await expect(runTiledAnalysis(inMemoryTileSource(L), s, model, { tileUm: 20, spill: { dir, minOpenings: 0 }, isCancelled: () => ++calls > 30 })).rejects.toThrow(/cancelled/);
    expect(readdirSync(dir).filter((n) => n.startsWith('trenchant-'))).toEqual([]);
  }, 60_000);
});

describe('spilled run peak heap', () => {
  // Child processes (spill-memory-child.ts): live heap + ArrayBuffer bytes after a forced GC, sampled through the
  // global stages, on the generated bench layout (one polygon per 10 µm site). Memory, not time.
  const child = (sites: number, mode: 'memory' | 'spill') => {
    const r = spawnSync(process.execPath, ['--expose-gc', '--import', 'tsx', 'tests/pipeline/spill-memory-child.ts', String(sites), mode, dir], { encoding: 'utf8', timeout: 300_000 });
    if (r.status !== 0) throw new Error(`child ${mode} ${sites}: ${r.stderr}`);
    return JSON.parse(r.stdout.trim().split('\n').pop() as string) as { openings: number; peakBytes: number; grid: { nx: number; ny: number }; flags: number };
  };

  it('peak does not grow with the opening count; the in-memory path grows by hundreds of bytes per opening', () => {
    // Noise only adds to a peak (lazily loaded code, GC timing), so each spilled size keeps the lower of two runs.
    const lower = (a: ReturnType<typeof child>, b: ReturnType<typeof child>) => (a.peakBytes <= b.peakBytes ? a : b);
    const small = lower(child(250, 'spill'), child(250, 'spill'));
    const big = lower(child(500, 'spill'), child(500, 'spill'));
    const memory = child(500, 'memory');
    expect(big.openings).toBeGreaterThan(3.5 * small.openings);
    expect([big.flags, memory.flags]).toEqual([memory.flags, big.flags]);
    // Same grid size (the automatic pixel hits the same pixel cap), so only the openings differ.
    expect(Math.abs(big.grid.nx * big.grid.ny - small.grid.nx * small.grid.ny)).toBeLessThan(0.05 * big.grid.nx * big.grid.ny);
    expect(memory.peakBytes).toBeGreaterThan(200 * memory.openings);
    expect(big.peakBytes).toBeLessThan(0.35 * memory.peakBytes);
    // 3/4 of the openings added cost under 50 bytes each in the spilled run (the chunk, grid and flag cap are fixed),
    // against ≈ 350 in memory. Single runs of either size peak anywhere in 9.3–15.7 MB (6 runs, 2026-12-03), so the
    // difference of two carries up to ±6 MB of noise: allowed on top, still far below the in-memory path's ≈ 60 MB.
    const noiseBytes = 6e6;
    expect(big.peakBytes - small.peakBytes).toBeLessThan(50 * (big.openings - small.openings) + noiseBytes);
    expect(small.peakBytes).toBeLessThan(0.35 * memory.peakBytes);
  }, 900_000);
});
