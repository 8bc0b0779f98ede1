/**
 * Stores a finished worker result: flags, the map index and the per-opening file's index row, in one transaction.
 * The per-opening results stay in the file the worker wrote (lib/jobs/feature-file.ts); only its name, count and
 * size go in the database, so saving a million openings costs one row instead of a million inserts. Any earlier
 * rows of the same analysis (a restart while saving) are replaced.
 */
import { randomUUID } from 'node:crypto';
import path from 'node:path';
import type { Db } from '@/db/client';
import type { AnalysisTaskResult } from '@/lib/pipeline/worker';

type OkResult = Extract<AnalysisTaskResult, { ok: true }>;

/** Map name used in URLs: the file name without ".trgrid" (e.g. "risk", "window-density-700um-70um"). */
export function mapNameOf(file: string): string {
  return path.basename(file).replace(/\.trgrid$/, '');
}

export async function saveResultRows(db: Db, analysisId: string, result: OkResult, onChunk?: (fraction: number) => void): Promise<void> {
  const sqlite = db.$client;
  sqlite.transaction(() => {
    sqlite.prepare('DELETE FROM analysis_flags WHERE analysis_id = ?').run(analysisId);
    sqlite.prepare('DELETE FROM analysis_features WHERE analysis_id = ?').run(analysisId);
    sqlite.prepare('DELETE FROM analysis_feature_files WHERE analysis_id = ?').run(analysisId);
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
    const ff = result.featureFile;
    sqlite.prepare('INSERT INTO analysis_feature_files (analysis_id, file, count, bytes) VALUES (?,?,?,?)').run(analysisId, ff.file, ff.count, ff.bytes);
  })();
  onChunk?.(1);
}

/** SQLite REAL cannot hold NaN (it becomes NULL in a NOT NULL column); infinities survive. */
function num(v: number): number {
  return Number.isNaN(v) ? 0 : v;
}
