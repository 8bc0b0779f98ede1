/**
 * The trenchant-polygons v1 CSV reader (our own format, documented in csv-reader.ts). Expected values are worked
 * by hand from the rows.
 */
import { describe, expect, it } from 'vitest';
import { readLayoutBytes } from '@/lib/layout/read-bytes';
import { layerSummary } from '@/lib/geometry/union-area';
import { text } from './helpers';

describe('CSV polygons', () => {
  it('reads vertices in µm on the dbu grid, one polygon per (layer, datatype, polygon) run', async () => {
    const csv = [
      '# trenchant-polygons v1',
      '# unit=um dbu=0.001 name=demo',
      'layer,datatype,polygon,x,y',
      '1,0,a,0,0', '1,0,a,10,0', '1,0,a,10,5', '1,0,a,0,5', '1,0,a,0,0', // closed explicitly
      '# a comment row',
      '1,0,b,5,0', '1,0,b,5,5', '1,0,b,15,5', '1,0,b,15,0', // clockwise, overlaps a by 5×5
      '',
      '2,7,1,0,0', '2,7,1,1.5,0', '2,7,1,0,2.5',
    ].join('\n');
    const l = await readLayoutBytes(text(csv));
    expect(l.format).toBe('csv');
    expect(l.libraryName).toBe('demo');
    expect(l.dbuUm).toBe(0.001);
    const rows = layerSummary(l);
    expect(rows.map((r) => [r.layer, r.datatype, r.polygons])).toEqual([[1, 0, 2], [2, 7, 1]]);
    expect(rows[0]!.areaUm2).toBeCloseTo(50 + 50 - 25, 9); // union of two 10×5 rectangles overlapping 5×5
    expect(rows[1]!.areaUm2).toBeCloseTo(1.875, 9); // triangle ½·1.5·2.5
    expect(rows[0]!.bboxUm).toEqual([0, 0, 15, 5]);
  });

  it('accepts nm and dbu units', async () => {
    const nm = await readLayoutBytes(text('# trenchant-polygons v1\n# unit=nm dbu=0.005\nlayer,datatype,polygon,x,y\n1,0,1,0,0\n1,0,1,1000,0\n1,0,1,1000,1000\n'));
    expect(nm.layers[0]!.coords[2]).toBe(200); // 1000 nm / 5 nm
    const dbu = await readLayoutBytes(text('# trenchant-polygons v1\n# unit=dbu dbu=0.01\nlayer,datatype,polygon,x,y\n1,0,1,0,0\n1,0,1,7,0\n1,0,1,7,7\n'));
    expect(dbu.userUnitUm).toBe(0.01);
    expect(dbu.layers[0]!.coords[2]).toBe(7);
  });

  it('streams: the same result when fed one byte at a time', async () => {
    const csv = text('# trenchant-polygons v1\nlayer,datatype,polygon,x,y\n1,0,1,0,0\n1,0,1,1,0\n1,0,1,1,1\n');
    async function* bytes() {
      for (let i = 0; i < csv.length; i++) yield csv.slice(i, i + 1);
    }
    const l = await readLayoutBytes(bytes());
    expect(Array.from(l.layers[0]!.coords)).toEqual([0, 0, 1000, 0, 1000, 1000]);
  });
});
