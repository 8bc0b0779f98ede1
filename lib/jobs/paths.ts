/**
 * Where uploaded layouts, temporary uploads and analysis results live. The data folder is TRENCHANT_DATA_DIR, or
 * else the folder holding the SQLite file (TRENCHANT_DB, default ./data), so a test server's temporary database
 * keeps its files beside it. Paths stored in the database are relative to the data folder.
 */
import path from 'node:path';
import { databasePath } from '@/db/client';

export function dataDir(): string {
  return path.resolve(process.env.TRENCHANT_DATA_DIR ?? path.dirname(databasePath()));
}

/** Folder for uploads in flight (removed on failure; emptied at start-up). */
export function uploadTmpDir(): string {
  return path.join(dataDir(), 'tmp');
}

/** Relative path of a stored revision file. */
export function revisionRelPath(projectId: string, revisionId: string, format: 'gdsii' | 'csv'): string {
  return path.join('layouts', projectId, `${revisionId}.${format === 'gdsii' ? 'gds' : 'csv'}`);
}

/** Relative folder of an analysis's result files. */
export function analysisRelDir(analysisId: string): string {
  return path.join('analyses', analysisId);
}

/** Absolute path of a data-folder-relative path; refuses paths that would leave the data folder. */
export function resolveData(rel: string): string {
  const root = dataDir();
  const abs = path.resolve(root, rel);
  if (abs !== root && !abs.startsWith(root + path.sep)) throw new Error(`path ${rel} leaves the data folder`);
  return abs;
}
