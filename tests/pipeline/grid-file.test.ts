/**
 * TRGRID1 round trip and corrupt-file errors. Byte-level expectations follow the layout documented in
 * lib/pipeline/grid-file.ts; float32 values are compared against Math.fround (IEEE 754 single rounding).
 */
import { mkdtemp, readdir, readFile, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { decodeGrid, encodeGrid, GridFileError, type GridMap } from '@/lib/pipeline/grid-file';
import { readGridFile, writeGridFile } from '@/lib/pipeline/grid-file-node';

const sample: GridMap = {
  kind: 'window-density',
  unit: 'fraction',
  grid: { x0Um: -12.5, y0Um: 40, pixelUm: 70, nx: 3, ny: 2 },
  meta: { windowUm: 700, stepUm: 70 },
  values: Float32Array.from([0, 0.1, 0.2, NaN, 1, 1 / 3]),
};

function codeOf(fn: () => unknown): string {
  try {
    fn();
  } catch (err) {
    if (err instanceof GridFileError) return `${err.code}@${err.offset}`;
    throw err;
  }
  return 'no error';
}

describe('encodeGrid / decodeGrid', () => {
  it('round-trips geometry, kind, unit, meta and values (NaN kept)', () => {
    const bytes = encodeGrid(sample);
    const back = decodeGrid(bytes);
    expect(back.kind).toBe('window-density');
    expect(back.unit).toBe('fraction');
    expect(back.grid).toEqual(sample.grid);
    expect(back.meta).toEqual(sample.meta);
    expect(Number.isNaN(back.values[3])).toBe(true);
    expect(back.values[5]).toBe(Math.fround(1 / 3));
    expect(Array.from(back.values).filter((v) => !Number.isNaN(v))).toEqual([0, Math.fround(0.1), Math.fround(0.2), 1, Math.fround(1 / 3)]);
  });

  it('writes the documented header: magic, little-endian sizes, 8-byte aligned data', () => {
    const bytes = encodeGrid(sample);
    const dv = new DataView(bytes.buffer, bytes.byteOffset);
    expect(new TextDecoder().decode(bytes.subarray(0, 8))).toBe('TRGRID1\0');
    const dataOffset = dv.getUint32(8, true);
    expect(dataOffset % 8).toBe(0);
    expect([dv.getUint32(12, true), dv.getUint32(16, true), dv.getUint32(20, true)]).toEqual([3, 2, 1]);
    expect([dv.getFloat64(24, true), dv.getFloat64(32, true), dv.getFloat64(40, true)]).toEqual([-12.5, 40, 70]);
    expect(bytes.length).toBe(dataOffset + 4 * 6);
    expect(dv.getFloat32(dataOffset + 4 * 2, true)).toBe(Math.fround(0.2));
  });

  it('decodes from an unaligned view (a buffer slice at an odd offset)', () => {
    const bytes = encodeGrid(sample);
    const padded = new Uint8Array(bytes.length + 3);
    padded.set(bytes, 3);
    expect(decodeGrid(padded.subarray(3)).values[2]).toBe(Math.fround(0.2));
  });

  it('encodeGrid refuses a value count that does not match nx·ny', () => {
    expect(() => encodeGrid({ ...sample, values: new Float32Array(5) })).toThrow(RangeError);
  });

  it('names the problem and byte offset for corrupt files', () => {
    const good = encodeGrid(sample);
    const edit = (f: (b: Uint8Array, dv: DataView) => void) => {
      const b = good.slice();
      f(b, new DataView(b.buffer));
      return b;
    };
    expect(codeOf(() => decodeGrid(good.subarray(0, 20)))).toBe('truncated@20');
    expect(codeOf(() => decodeGrid(edit((b) => (b[0] = 0x58))))).toBe('bad-magic@0');
    expect(codeOf(() => decodeGrid(edit((_, dv) => dv.setUint32(20, 2, true))))).toBe('bad-dtype@20');
    expect(codeOf(() => decodeGrid(edit((_, dv) => dv.setUint32(12, 0, true))))).toBe('bad-header@12');
    expect(codeOf(() => decodeGrid(edit((_, dv) => dv.setFloat64(40, -1, true))))).toBe('bad-header@40');
    expect(
      codeOf(() =>
        decodeGrid(
          edit((_, dv) => {
            dv.setUint32(12, 1 << 20, true);
            dv.setUint32(16, 1 << 20, true);
          }),
        ),
      ),
    ).toBe('too-large@12');
    expect(codeOf(() => decodeGrid(good.subarray(0, good.length - 1)))).toBe(`truncated@${good.length - 1}`);
    const longer = new Uint8Array(good.length + 4);
    longer.set(good);
    expect(codeOf(() => decodeGrid(longer))).toBe(`trailing-bytes@${good.length}`);
    // kind "window-density" → "window-densitX": unknown kind
    expect(codeOf(() => decodeGrid(edit((b) => (b[50 + 13] = 0x58))))).toBe('bad-kind@50');
    // break the metadata JSON's opening brace
    const metaStart = 48 + 2 + 14 + 2 + 'fraction'.length + 4;
    expect(codeOf(() => decodeGrid(edit((b) => (b[metaStart] = 0x5b))))).toBe(`bad-header@${metaStart}`);
    const e = (() => {
      try {
        decodeGrid(good.subarray(0, good.length - 1));
      } catch (err) {
        return err as Error;
      }
      return null;
    })();
    expect(e?.message).toMatch(/^grid file truncated: \d+ bytes, 3×2 float32 samples need \d+$/);
  });
});

describe('writeGridFile / readGridFile', () => {
  let dir = '';
  afterAll(async () => {
    if (dir) await rm(dir, { recursive: true, force: true });
  });

  it('writes atomically (no temporary file left) and reads back', async () => {
    dir = await mkdtemp(join(tmpdir(), 'trgrid-'));
    const path = join(dir, 'window.trgrid');
    const bytes = await writeGridFile(path, sample);
    expect((await readFile(path)).length).toBe(bytes);
    expect(await readdir(dir)).toEqual(['window.trgrid']);
    expect((await readGridFile(path)).grid).toEqual(sample.grid);
  });

  it('readGridFile names the file in decoding errors', async () => {
    const path = join(dir, 'bad.trgrid');
    await writeFile(path, new Uint8Array(100));
    await expect(readGridFile(path)).rejects.toThrow(/bad\.trgrid: not a Trenchant grid file/);
  });
});
