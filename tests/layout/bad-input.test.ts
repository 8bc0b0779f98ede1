/**
 * Every bad-input case of issue 3: one LayoutReadError with a stable code, a one-line message naming the problem
 * and the byte offset (GDSII) or line (CSV). Record layouts from the Calma GDSII Stream Format Manual 6.0.
 */
import { describe, expect, it } from 'vitest';
import { GdsiiWriter } from '@/lib/layout/gdsii-writer';
import { DataType, Rec } from '@/lib/layout/gdsii-records';
import { readError, records, text } from './helpers';

function valid(): Uint8Array {
  return new GdsiiWriter().beginCell('TOP').rect(1, 0, 0, 0, 1000, 1000).endCell().finish();
}

describe('bad GDSII input', () => {
  it('an empty file gives "empty"', async () => {
    const e = await readError(new Uint8Array(0));
    expect(e.code).toBe('empty');
    expect(e.message).toMatch(/empty file/);
  });

  it('an image renamed .gds is "not a GDSII stream file" at byte 0', async () => {
    const png = new Uint8Array([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 0, 0, 0, 13, 0x49, 0x48, 0x44, 0x52, ...new Array(80).fill(7)]);
    const e = await readError(png);
    expect(e.code).toBe('not-gdsii');
    expect(e.offset).toBe(0);
    expect(e.message).toMatch(/not a GDSII stream file.*89 50 4e 47/);
  });

  it('a file cut inside a record names the record and its start offset', async () => {
    const bytes = valid();
    const xy = records(bytes).find(([, , t]) => t === Rec.XY) as [number, number, number];
    const e = await readError(bytes.subarray(0, xy[0] + 10));
    expect(e.code).toBe('truncated');
    expect(e.offset).toBe(xy[0]);
    expect(e.message).toMatch(new RegExp(`inside a XY record starting at byte ${xy[0]}`));
  });

  it('a file cut between records reports a missing ENDLIB', async () => {
    const bytes = valid();
    const endstr = records(bytes).find(([, , t]) => t === Rec.ENDSTR) as [number, number, number];
    const e = await readError(bytes.subarray(0, endstr[0]));
    expect(e.code).toBe('truncated');
    expect(e.message).toMatch(/before ENDLIB/);
  });

  it('an odd record length is refused with its offset', async () => {
    const bytes = valid().slice();
    const [off] = records(bytes)[3] as [number, number, number]; // UNITS
    bytes[off + 1] = 19;
    const e = await readError(bytes);
    expect(e.code).toBe('bad-record-length');
    expect(e.offset).toBe(off);
    expect(e.message).toMatch(/odd record length 19 at byte/);
  });

  it('a record length shorter than its header is refused', async () => {
    const bytes = valid().slice();
    const [off] = records(bytes)[2] as [number, number, number];
    bytes[off] = 0;
    bytes[off + 1] = 2;
    const e = await readError(bytes);
    expect(e.code).toBe('bad-record-length');
    expect(e.message).toMatch(new RegExp(`record length 2 at byte ${off} is shorter than the 4-byte record header`));
  });

  it('an unknown record type is named with its byte offset', async () => {
    const bytes = valid().slice();
    const [off] = records(bytes).find(([, , t]) => t === Rec.LAYER) as [number, number, number];
    bytes[off + 2] = 0x4a;
    const e = await readError(bytes);
    expect(e.code).toBe('unknown-record');
    expect(e.message).toBe(`unknown record type 0x4A at byte ${off}`);
  });

  it('an element without XY is refused, naming the element', async () => {
    const w = new GdsiiWriter().beginCell('TOP');
    w.record(Rec.BOUNDARY, DataType.none).int16Record(Rec.LAYER, [1]).int16Record(Rec.DATATYPE, [0]).record(Rec.ENDEL, DataType.none);
    const bytes = w.endCell().finish();
    const at = (records(bytes).find(([, , t]) => t === Rec.BOUNDARY) as [number, number, number])[0];
    const e = await readError(bytes);
    expect(e.code).toBe('missing-xy');
    expect(e.message).toBe(`BOUNDARY element at byte ${at} has no XY record`);
  });

  it('SREF and AREF to a missing cell name the cell and the SNAME offset', async () => {
    for (const make of [(w: GdsiiWriter) => w.sref('NOPE', 0, 0), (w: GdsiiWriter) => w.aref('NOPE', 2, 2, [0, 0], [20, 0], [0, 20])]) {
      const w = new GdsiiWriter().beginCell('TOP');
      make(w);
      const bytes = w.endCell().finish();
      const sname = (records(bytes).find(([, , t]) => t === Rec.SNAME) as [number, number, number])[0];
      const e = await readError(bytes);
      expect(e.code).toBe('missing-cell');
      expect(e.message).toBe(`cell "NOPE" is referenced (SNAME at byte ${sname}) but never defined`);
    }
  });

  it('a cell referencing itself is a reference cycle, not a hang', async () => {
    const bytes = new GdsiiWriter().beginCell('SELF').rect(1, 0, 0, 0, 1, 1).sref('SELF', 10, 0).endCell().finish();
    const e = await readError(bytes);
    expect(e.code).toBe('reference-cycle');
    expect(e.message).toMatch(/reference cycle: "SELF" → "SELF"/);
  });

  it('a cycle through other cells names every cell in it', async () => {
    const w = new GdsiiWriter();
    w.beginCell('TOP').sref('A', 0, 0).endCell();
    w.beginCell('A').sref('B', 0, 0).endCell();
    w.beginCell('B').aref('C', 2, 2, [0, 0], [10, 0], [0, 10]).endCell();
    w.beginCell('C').rect(1, 0, 0, 0, 1, 1).sref('A', 5, 5).endCell();
    const e = await readError(w.finish());
    expect(e.code).toBe('reference-cycle');
    expect(e.message).toMatch(/"A" → "B" → "C" → "A"/);
  });

  it('an AREF that would flatten beyond the limit is refused before allocating', async () => {
    const w = new GdsiiWriter();
    w.beginCell('TOP').aref('V', 32767, 32767, [0, 0], [32767 * 10, 0], [0, 32767 * 10]).endCell();
    w.beginCell('V').rect(1, 0, 0, 0, 5, 5).endCell();
    const e = await readError(w.finish());
    expect(e.code).toBe('too-large');
    expect(e.message).toMatch(/flattens to 1073676289 polygons/);
  });

  it('a --top cell that does not exist is named', async () => {
    const e = await readError(valid(), { topCell: 'MISSING' });
    expect(e.code).toBe('no-top-cell');
    expect(e.message).toMatch(/top cell "MISSING" is not in the library \(cells: TOP\)/);
  });

  it('every message is a single line', async () => {
    const e = await readError(new Uint8Array([0, 6, 0, 2, 0, 3, 0, 1]));
    expect(e.message).not.toMatch(/\n/);
  });
});

describe('bad CSV input', () => {
  const head = '# trenchant-polygons v1\n# unit=um dbu=0.001\nlayer,datatype,polygon,x,y\n';

  it('a non-numeric coordinate names its line', async () => {
    const e = await readError(text(`${head}1,0,1,0,0\n1,0,1,10,0\n1,0,1,ten,5\n`));
    expect(e.code).toBe('csv');
    expect(e.line).toBe(6);
    expect(e.message).toBe('CSV line 6: x "ten" is not a number');
  });

  it('a polygon with fewer than three vertices names the line where it starts', async () => {
    const e = await readError(text(`${head}1,0,1,0,0\n1,0,1,10,0\n1,0,1,10,5\n1,0,2,0,0\n1,0,2,3,3\n1,0,2,0,0\n`));
    expect(e.code).toBe('csv');
    expect(e.line).toBe(7);
    expect(e.message).toMatch(/CSV line 7: polygon 2 on layer 1\/0 has 2 vertices, at least 3 needed/);
  });

  it('a missing header is refused', async () => {
    const e = await readError(text('# trenchant-polygons v1\n1,0,1,0,0\n'));
    expect(e.code).toBe('csv');
    expect(e.message).toMatch(/CSV line 2: header must be "layer,datatype,polygon,x,y"/);
  });

  it('off-grid coordinates and scattered polygons are refused with their line', async () => {
    expect((await readError(text(`${head}1,0,1,0.0004,0\n`))).message).toMatch(/CSV line 4: x 0.0004 is not on the 0.001 µm database grid/);
    const e = await readError(text(`${head}1,0,1,0,0\n1,0,1,1,0\n1,0,1,1,1\n1,0,2,5,5\n1,0,2,6,5\n1,0,2,6,6\n1,0,1,0,1\n`));
    expect(e.message).toMatch(/CSV line 10: polygon 1 on layer 1\/0 continues after other rows/);
  });

  it('a wrong column count names the line', async () => {
    const e = await readError(text(`${head}1,0,1,0\n`));
    expect(e.message).toBe('CSV line 4: expected 5 values (layer,datatype,polygon,x,y), got 4');
  });
});
