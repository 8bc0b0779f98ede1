/**
 * Outside-checker layouts (tests/fixtures/verify/make_layouts.py): GDSII streams written record by record by a small
 * writer of their own (neither gdspy's nor Trenchant's), read back by gdspy 1.4.2 (Debian python3-gdspy) for the
 * expected top cell, cell and label counts, flattened polygon counts, union areas and bounding boxes. Rows gdspy does
 * not cover (BOX, an unclosed BOUNDARY) carry a hand computation in their "source" field.
 */
import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { readLayoutFile } from '@/lib/layout/read';
import { inspectReport } from '@/lib/cli/inspect';

interface Row { layer: number; datatype: number; polygons: number; areaUm2: number; bboxUm: number[]; source?: string; areaRelTol?: number }
interface Fixture { topCell: string; cells: number; labels: number; dbuUm: number; userUnitUm: number; areaRelTol: number; bboxTolUm: number; note: string; layers: Row[] }

const dir = fileURLToPath(new URL('../fixtures/verify/', import.meta.url));
const expected = JSON.parse(readFileSync(`${dir}expected.json`, 'utf8')) as { fixtures: Record<string, Fixture> };

describe('layouts from an independent GDSII writer, measured by gdspy', () => {
  for (const [file, want] of Object.entries(expected.fixtures)) {
    it(`${file}: top cell, units, counts, union areas and bboxes as gdspy (or the hand computation) gives`, async () => {
      const got = inspectReport(await readLayoutFile(`${dir}${file}`));
      expect(got.topCell).toBe(want.topCell); // gdspy top_level(), the one with most flattened polygons
      expect(got.cells).toBe(want.cells); // gdspy cell_dict
      expect(got.labels).toBe(want.labels); // gdspy Cell.get_labels() of the top cell
      expect(got.dbuUm / want.dbuUm).toBeCloseTo(1, 12); // gdspy precision (UNITS record)
      expect(got.userUnitUm / want.userUnitUm).toBeCloseTo(1, 12); // gdspy unit (UNITS record)
      expect(got.layers.map((l) => `${l.layer}/${l.datatype}`)).toEqual(want.layers.map((l) => `${l.layer}/${l.datatype}`));
      for (const w of want.layers) {
        const g = got.layers.find((l) => l.layer === w.layer && l.datatype === w.datatype);
        const where = `${file} ${w.layer}/${w.datatype}${w.source ? ` (${w.source})` : ''}; ${want.note}`;
        expect(g?.polygons, where).toBe(w.polygons);
        const rel = Math.abs((g?.areaUm2 ?? NaN) - w.areaUm2) / w.areaUm2;
        expect(rel, `${where}: ${g?.areaUm2} vs ${w.areaUm2}`).toBeLessThanOrEqual(w.areaRelTol ?? want.areaRelTol);
        w.bboxUm.forEach((v, k) => expect(Math.abs((g?.bboxUm?.[k] ?? NaN) - v), `${where} bbox[${k}]`).toBeLessThanOrEqual(want.bboxTolUm + 1e-9));
      }
    });
  }
});
