/**
 * Shared set-up for the large-layout tests: a generated die in a temp folder, the sample model, the app started with
 * the whole-read size set low (so uploads read through the on-disk index and analyses run tiled), the untiled
 * reference run of a stored analysis in this process, and polygons in a comparable text form.
 */
import Database from 'better-sqlite3';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { expect } from 'vitest';
import analyse from '@/lib/pipeline/worker';
import type { WirePolygons } from '@/lib/viewer/polygon-wire';
import type { TestClient } from '../support/http';
import { startTestServer, type TestServer } from '../support/server';
import { signInAs } from '../pipeline-server/support';

/** Analysis memory budget (MB) for the server and the reference run: small, so the layout is cut into several tiles. */
export const MEMORY_MB = '24';
export const LARGE_MODEL = JSON.parse(readFileSync('samples/models/deep-trench-continuous.json', 'utf8')) as Record<string, unknown>;
export const LARGE_SETTINGS = { etchLayers: [{ layer: 1, datatype: 0 }], pixel: { sizeUm: 2 } };

/** `bytes` written as `name` in a fresh temp folder; `remove()` deletes the folder. */
export function largeLayoutFile(prefix: string, name: string, bytes: Uint8Array) {
  const dir = mkdtempSync(path.join(tmpdir(), prefix));
  const file = path.join(dir, name);
  writeFileSync(file, bytes);
  return { dir, file, remove: () => rmSync(dir, { recursive: true, force: true }) };
}

/** The app with layouts above 0.5 MB read through the index, the small memory budget, and a designer signed in. */
export async function startLargeLayoutServer(env: Record<string, string>): Promise<{ server: TestServer; designer: TestClient }> {
  const server = await startTestServer({ env: { TRENCHANT_WHOLE_READ_MB: '0.5', TRENCHANT_ANALYSIS_MEMORY_MB: MEMORY_MB, ...env } });
  return { server, designer: await signInAs(server.baseUrl, 'designer') };
}

/** The untiled run of a stored analysis (its settings and model from the server's database), here, into `outDir`. */
export async function untiledReference(server: TestServer, analysisId: string, layoutPath: string, outDir: string) {
  const db = new Database(server.dbFile, { readonly: true });
  const row = db.prepare('SELECT settings, model FROM analyses WHERE id = ?').get(analysisId) as { settings: string; model: string };
  db.close();
  const saved = process.env.TRENCHANT_ANALYSIS_MEMORY_MB;
  process.env.TRENCHANT_ANALYSIS_MEMORY_MB = MEMORY_MB;
  try {
    const ref = await analyse({ layoutPath, settings: JSON.parse(row.settings), model: JSON.parse(row.model), outDir, wholeReadBytes: 1e12 });
    if (!ref.ok) throw new Error(ref.message);
    return ref;
  } finally {
    if (saved === undefined) delete process.env.TRENCHANT_ANALYSIS_MEMORY_MB;
    else process.env.TRENCHANT_ANALYSIS_MEMORY_MB = saved;
  }
}

/** The tiled run's stored summary equals the reference's, apart from timings and the record of the tiling. */
export function expectSameSummary(tiled: Record<string, unknown>, reference: object): void {
  const { timingsMs: _a, tiled: _b, ...got } = tiled;
  const { timingsMs: _c, ...want } = reference as Record<string, unknown>;
  expect(got).toEqual(JSON.parse(JSON.stringify(want)));
}

/** Each polygon as "layer/datatype:x,y;x,y…" (float32 µm from the origin, in wire order), sorted. */
export function polygonTexts(w: WirePolygons): string[] {
  const out: string[] = [];
  for (let r = 0; r < w.polyLayer.length; r++) {
    const l = w.layers[w.polyLayer[r] as number]!;
    const pts: string[] = [];
    for (let k = w.offsets[r] as number; k < (w.offsets[r + 1] as number); k++) pts.push(`${w.coords[2 * k]},${w.coords[2 * k + 1]}`);
    out.push(`${l.layer}/${l.datatype}:${pts.join(';')}`);
  }
  return out.sort();
}
