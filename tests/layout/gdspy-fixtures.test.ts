/**
 * The reader + flattener + union area against an independent implementation: fixtures written by gdspy
 * (python3-gdspy 1.4.2 from Debian) with expected counts, union areas and bounding boxes computed by gdspy after
 * reading the files back (tests/fixtures/gds/make_fixtures.py). Exceptions are marked in expected.json ("source").
 */
import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { readLayoutFile } from '@/lib/layout/read';
import { inspectReport } from '@/lib/cli/inspect';

interface ExpectedLayer { layer: number; datatype: number; polygons: number; areaUm2: number; bboxUm: number[]; source?: string }
interface ExpectedFixture { topCell: string; dbuUm: number; userUnitUm: number; cells: number; areaRelTol: number; toleranceNote: string; bboxTolUm: number; layers: ExpectedLayer[] }

const dir = fileURLToPath(new URL('../fixtures/gds/', import.meta.url));
const expected = JSON.parse(readFileSync(`${dir}expected.json`, 'utf8')) as { fixtures: Record<string, ExpectedFixture> };

describe('GDSII fixtures written and measured by gdspy', () => {
  for (const [file, want] of Object.entries(expected.fixtures)) {
    it(`readLayoutFile(${file}) matches gdspy's counts, union areas and bboxes`, async () => {
      const report = inspectReport(await readLayoutFile(`${dir}${file}`));
      expect(report.topCell).toBe(want.topCell); // gdspy GdsLibrary.top_level()
      expect(report.cells).toBe(want.cells); // gdspy cell_dict size
      expect(report.dbuUm).toBeCloseTo(want.dbuUm, 12); // gdspy GdsLibrary.precision (UNITS)
      expect(report.userUnitUm).toBeCloseTo(want.userUnitUm, 9); // gdspy GdsLibrary.unit (UNITS)
      expect(report.layers.map((l) => [l.layer, l.datatype])).toEqual(want.layers.map((l) => [l.layer, l.datatype]));
      for (const w of want.layers) {
        const got = report.layers.find((l) => l.layer === w.layer && l.datatype === w.datatype);
        const where = `${file} layer ${w.layer}/${w.datatype}${w.source ? ` (${w.source})` : ''}`;
        expect(got?.polygons, where).toBe(w.polygons); // gdspy Cell.get_polygons(by_spec=True) count
        const rel = Math.abs((got?.areaUm2 ?? NaN) - w.areaUm2) / w.areaUm2;
        expect(rel, `${where}: area ${got?.areaUm2} vs ${w.areaUm2}; ${want.toleranceNote}`).toBeLessThanOrEqual(want.areaRelTol); // gdspy boolean('or').area()
        const bb = got?.bboxUm ?? [NaN, NaN, NaN, NaN];
        for (let k = 0; k < 4; k++) {
          expect(Math.abs((bb[k] as number) - (w.bboxUm[k] as number)), `${where} bbox[${k}]`).toBeLessThanOrEqual(want.bboxTolUm + 1e-9); // gdspy polygon extents
        }
      }
    });
  }
});
