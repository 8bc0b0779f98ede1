/**
 * Stores a finished worker result: flags, per-opening results and the map index, then the summary. Feature rows
 * go in chunks with a pause between them, so a million openings never block the server's event loop for long.
 * Any earlier partial rows of the same analysis (a restart while saving) are replaced.
 */
import { randomUUID } from 'node:crypto';
import path from 'node:path';
import { setImmediate as yieldToLoop } from 'node:timers/promises';
import type { Db } from '@/db/client';
import type { AnalysisTaskResult } from '@/lib/pipeline/worker';

type OkResult = Extract<AnalysisTaskResult, { ok: true }>;

const FEATURE_CHUNK = 20_000;

/** Map name used in URLs: the file name without ".trgrid" (e.g. "risk", "window-density-700um-70um"). */
export function mapNameOf(file: string): string {
  return path.basename(file).replace(/\.trgrid$/, '');
}

export async function saveResultRows(db: Db, analysisId: string, result: OkResult, onChunk?: (fraction: number) => void): Promise<void> {
  const sqlite = db.$client;
  sqlite.transaction(() => {
    sqlite.prepare('DELETE FROM analysis_flags WHERE analysis_id = ?').run(analysisId);
    sqlite.prepare('DELETE FROM analysis_features WHERE analysis_id = ?').run(analysisId);
    sqlite.prepare('DELETE FROM analysis_maps WHERE analysis_id = ?').run(analysisId);
    const flag = sqlite.prepare(
      `INSERT INTO analysis_flags (id, analysis_id, flag_key, rank, kind, severity, x0_um, y0_um, x1_um, y1_um, x_um, y_um,
        measured, limit_value, unit, message, feature_id, window_um, step_um, uncertain) VALUES (?,?,?,?,?,?,?,?,?,?,?,?,?,?,?,?,?,?,?,?)`,
    );
    result.flags.forEach((f, rank) => {
      const [x0, y0, x1, y1] = f.bboxUm;
      flag.run(randomUUID(), analysisId, f.id, rank, f.kind, f.severity, x0, y0, x1, y1, f.xUm, f.yUm, num(f.measured), num(f.limit), f.unit, f.message, f.featureId ?? null, f.window?.windowUm ?? null, f.window?.stepUm ?? null, f.uncertain === undefined ? null : f.uncertain ? 1 : 0);
    });
    const map = sqlite.prepare(
      'INSERT INTO analysis_maps (analysis_id, name, kind, unit, file, x0_um, y0_um, pixel_um, nx, ny, meta, bytes) VALUES (?,?,?,?,?,?,?,?,?,?,?,?)',
    );
    for (const m of result.maps) {
      map.run(analysisId, mapNameOf(m.file), m.kind, m.unit, m.file, m.grid.x0Um, m.grid.y0Um, m.grid.pixelUm, m.grid.nx, m.grid.ny, JSON.stringify(m.meta), m.bytes);
    }
  })();

  const feature = sqlite.prepare(
    `INSERT INTO analysis_features (analysis_id, feature_id, shape, model_kind, x_um, y_um, x0_um, y0_um, x1_um, y1_um, area_um2,
      width_um, length_um, effective_density, depth_um, aspect_ratio, margin_um, over_etch_um, reaches_target, warnings, depth_sigma_um)
      VALUES (?,?,?,?,?,?,?,?,?,?,?,?,?,?,?,?,?,?,?,?,?)`,
  );
  const features = result.features;
  const insertChunk = sqlite.transaction((from: number, to: number) => {
    for (let k = from; k < to; k++) {
      const r = features[k];
      if (!r) continue;
      const [x0, y0, x1, y1] = r.bboxUm;
      feature.run(
        analysisId, r.id, r.shape, r.modelKind, r.centroidUm[0], r.centroidUm[1], x0, y0, x1, y1, num(r.areaUm2), num(r.widthUm), num(r.lengthUm),
        num(r.effectiveDensity), num(r.depthUm), num(r.aspectRatio), num(r.marginUm), num(r.overEtchUm), r.reachesTarget ? 1 : 0,
        [...r.warnings, ...r.excursions.map((e) => `${e.quantity} outside the calibrated range`)].join('; '),
        r.depthSigmaUm ?? null,
      );
    }
  });
  for (let from = 0; from < features.length; from += FEATURE_CHUNK) {
    insertChunk(from, Math.min(features.length, from + FEATURE_CHUNK));
    onChunk?.(Math.min(1, (from + FEATURE_CHUNK) / features.length));
    await yieldToLoop();
  }
}

/** SQLite REAL cannot hold NaN (it becomes NULL in a NOT NULL column); infinities survive. */
function num(v: number): number {
  return Number.isNaN(v) ? 0 : v;
}
