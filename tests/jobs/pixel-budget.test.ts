/**
 * The analysis memory budget (lib/pipeline/settings.ts applyPixelBudget) and the worker's write cap. Expected
 * pixel counts are arithmetic on the invented die sizes.
 */
import { mkdtemp, readdir, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { GdsiiWriter } from '@/lib/layout/gdsii-writer';
import { applyPixelBudget, BYTES_PER_PIXEL_ESTIMATE, parseAnalysisSettings, pixelBudget } from '@/lib/pipeline/settings';
import analyse from '@/lib/pipeline/worker';

const MODEL = {
  name: 'budget test model (invented)',
  version: '1',
  openRateUmPerMin: 4,
  reactionProbability: 0.2,
  loading: { coefficient: 0.3, lengthUm: 500 },
  etch: { timeMin: 15, targetDepthUm: 50, toleranceUm: 2, maxAspectRatio: 40 },
  mode: 'continuous',
};

function settings(input: Record<string, unknown>) {
  const r = parseAnalysisSettings({ etchLayers: [{ layer: 5, datatype: 0 }], ...input });
  if (!r.ok) throw new Error(JSON.stringify(r.issues));
  return r.settings;
}

describe('pixel memory budget', () => {
  it('pixelBudget is memory / bytes per pixel', () => {
    expect(pixelBudget(800)).toBe(Math.floor((800 * 1024 * 1024) / BYTES_PER_PIXEL_ESTIMATE));
  });

  it('lowers maxPixels to the budget so the automatic pixel fits it (100 M pixels asked, 20 M allowed)', () => {
    const s = settings({ pixel: { maxPixels: 100_000_000 } });
    const r = applyPixelBudget(s, [20_000, 20_000], 800);
    expect(r.ok).toBe(true);
    if (!r.ok) return;
    expect(r.clamped).toBe(true);
    expect(r.settings.pixel.maxPixels).toBe(pixelBudget(800));
    expect(s.pixel.maxPixels).toBe(100_000_000); // input untouched
  });

  it('keeps settings below the budget as they are', () => {
    const s = settings({});
    const r = applyPixelBudget(s, [20_000, 20_000], 800);
    expect(r).toMatchObject({ ok: true, clamped: false });
    if (r.ok) expect(r.settings).toBe(s);
  });

  it('refuses an explicit pixel beyond the budget, naming the budget and a pixel that fits', () => {
    // 20 mm die at 1 µm = 400 M pixels; budget at 100 MB = 2 621 440 pixels.
    const r = applyPixelBudget(settings({ pixel: { sizeUm: 1, maxPixels: 100_000_000 } }), [20_000, 20_000], 100);
    expect(r.ok).toBe(false);
    if (r.ok) return;
    expect(r.message).toContain('400,000,000 pixels');
    expect(r.message).toContain('memory budget of 2,621,440 pixels');
    expect(r.message).toMatch(/at least [\d.]+ µm/);
  });
});

describe('worker write cap', () => {
  let dir = '';
  let gds = '';
  beforeAll(async () => {
    dir = await mkdtemp(join(tmpdir(), 'trenchant-budget-'));
    gds = join(dir, 'die.gds');
    const w = new GdsiiWriter({ libraryName: 'B', dbuUm: 0.001 });
    w.beginCell('TOP');
    w.rect(0, 0, 0, 0, 2_000_000, 2_000_000);
    for (let k = 0; k < 10; k++) w.rect(5, 0, 100_000 + k * 150_000, 100_000, 110_000 + k * 150_000, 1_900_000);
    w.endCell();
    await writeFile(gds, w.finish());
  });
  afterAll(async () => {
    if (dir) await rm(dir, { recursive: true, force: true });
  });

  it('refuses before computing when the maps alone exceed the cap, and writes nothing', async () => {
    const outDir = join(dir, 'small-cap');
    const r = await analyse({ layoutPath: gds, settings: { etchLayers: [{ layer: 5, datatype: 0 }] }, model: MODEL, outDir, maxResultBytes: 1024 * 1024, resultBudgetLabel: "this team's limit of 1 MiB per analysis" });
    expect(r).toMatchObject({ ok: false, code: 'over-budget' });
    if (r.ok) return;
    expect(r.message).toContain("above this team's limit of 1 MiB per analysis");
    expect(r.message).toMatch(/6 maps of \d+ × \d+ pixels/);
    await expect(readdir(outDir)).rejects.toThrow();
  });

  it('writes when within the cap, and the files add up to no more than the cap', async () => {
    const outDir = join(dir, 'ok');
    const cap = 64 * 1024 * 1024;
    const r = await analyse({ layoutPath: gds, settings: { etchLayers: [{ layer: 5, datatype: 0 }] }, model: MODEL, outDir, maxResultBytes: cap });
    expect(r.ok).toBe(true);
    if (!r.ok) return;
    const total = r.maps.reduce((n, m) => n + m.bytes, 0) + r.featureFile.bytes;
    expect(total).toBeLessThanOrEqual(cap);
    expect(r.featureFile.count).toBe(10);
  });

  it('derives the automatic pixel within the memory budget even when settings allow 100 M pixels', async () => {
    const prev = process.env.TRENCHANT_ANALYSIS_MEMORY_MB;
    process.env.TRENCHANT_ANALYSIS_MEMORY_MB = '10'; // 262 144 pixels
    try {
      const r = await analyse({ layoutPath: gds, settings: { etchLayers: [{ layer: 5, datatype: 0 }], pixel: { maxPixels: 100_000_000 } }, model: MODEL, outDir: join(dir, 'auto') });
      expect(r.ok).toBe(true);
      if (!r.ok) return;
      const { nx, ny } = r.summary.grid as { nx: number; ny: number };
      expect(nx * ny).toBeLessThanOrEqual(262_144);
      expect(nx * ny).toBeGreaterThan(262_144 / 4); // chosen near the budget, not far below it
    } finally {
      if (prev === undefined) delete process.env.TRENCHANT_ANALYSIS_MEMORY_MB;
      else process.env.TRENCHANT_ANALYSIS_MEMORY_MB = prev;
    }
  });

  it('refuses an explicit pixel beyond the memory budget before analysing', async () => {
    const prev = process.env.TRENCHANT_ANALYSIS_MEMORY_MB;
    process.env.TRENCHANT_ANALYSIS_MEMORY_MB = '10';
    try {
      const r = await analyse({ layoutPath: gds, settings: { etchLayers: [{ layer: 5, datatype: 0 }], pixel: { sizeUm: 0.5, maxPixels: 100_000_000 } }, model: MODEL, outDir: join(dir, 'px') });
      expect(r).toMatchObject({ ok: false, code: 'bad-input' });
      if (!r.ok) expect(r.message).toContain('memory budget of 262,144 pixels');
    } finally {
      if (prev === undefined) delete process.env.TRENCHANT_ANALYSIS_MEMORY_MB;
      else process.env.TRENCHANT_ANALYSIS_MEMORY_MB = prev;
    }
  });
});
