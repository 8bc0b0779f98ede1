/**
 * Per-opening results stored as the worker's column file give exactly what the analysis_features table gave:
 * readFeatureColumns (the bulk contract) and the paged results API are compared between both stores for the same
 * invented results (the table path is the reference implementation, kept for analyses saved before the file).
 */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { readFeatureColumns } from '@/lib/jobs/feature-columns';
import { encodeFeatureFile, featureFileBytes, readFeatureRange } from '@/lib/jobs/feature-file';
import { getResults } from '@/lib/jobs/results';
import { insertDoneAnalysis, inventedResults, saveAsFile, saveAsRows, tempDb } from './results-store';

const dir = mkdtempSync(path.join(tmpdir(), 'trenchant-featfile-'));
const db = tempDb(dir);
afterAll(() => {
  db.$client.close();
  rmSync(dir, { recursive: true, force: true });
});

describe('feature column file', () => {
  const results = inventedResults(5000);
  insertDoneAnalysis(db, 'rows');
  insertDoneAnalysis(db, 'file');
  saveAsRows(db, 'rows', results);
  saveAsFile(db, dir, 'file', results);

  it('readFeatureColumns gives identical columns from the file and from the table', () => {
    const a = readFeatureColumns(db, 'rows');
    const b = readFeatureColumns(db, 'file');
    expect(b.count).toBe(5000);
    for (const key of Object.keys(a) as (keyof typeof a)[]) {
      const va = a[key];
      const vb = b[key];
      if (typeof va === 'number') expect(vb).toBe(va);
      else expect(Array.from(vb as ArrayLike<number>), key).toEqual(Array.from(va as ArrayLike<number>));
    }
    // NaN lengths are stored as 0, as the table's NOT NULL REAL column forced.
    expect(b.lengthUm[0]).toBe(0);
  });

  it('the paged results API answers the same items from both stores', () => {
    for (const page of [{ offset: 0, limit: 500 }, { offset: 4990, limit: 500 }, { offset: 6000, limit: 10 }, { offset: 1234, limit: 1 }]) {
      const a = getResults(db, 'rows', page);
      const b = getResults(db, 'file', page);
      expect(b.features.total).toBe(5000);
      expect(JSON.stringify(b.features)).toBe(JSON.stringify(a.features));
    }
    const first = getResults(db, 'file', { offset: 0, limit: 1 }).features.items[0];
    expect(first?.warnings).toEqual(['aspect ratio reached the model limit', 'width outside the calibrated range']);
  });

  it('an empty result set round-trips', () => {
    const bytes = featureFileBytes(encodeFeatureFile([]));
    const f = path.join(dir, 'empty.trfeat');
    writeFileSync(f, bytes);
    expect(readFeatureRange(f, 0, 100).count).toBe(0);
  });

  it('a file with a damaged magic is refused by name', () => {
    const f = path.join(dir, 'bad.trfeat');
    const bytes = featureFileBytes(encodeFeatureFile(inventedResults(3)));
    bytes[0] = 0x58;
    writeFileSync(f, bytes);
    expect(() => readFeatureRange(f, 0, 1)).toThrow(/bad\.trfeat: not a TRFEAT1 file/);
  });
});
