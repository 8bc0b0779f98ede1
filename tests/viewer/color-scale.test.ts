import { describe, expect, it } from 'vitest';
import { colorOf, gradientCss, lutOf, normalise, paintRaster } from '@/lib/viewer/color-scale';

// Reference colours: matplotlib's published 256-entry tables (_cm_listed.py, van der Walt & Smith 2015),
// entries 0, 128 and 255 rounded to 8 bits (values quoted from memory of the table, e.g. viridis[0] =
// (0.267004, 0.004874, 0.329415) → #440154, viridis[255] = (0.993248, 0.906157, 0.143936) → #fde725).
const hex = (h: string) => [parseInt(h.slice(1, 3), 16), parseInt(h.slice(3, 5), 16), parseInt(h.slice(5, 7), 16)];
const entry = (lut: Uint8Array, k: number) => Array.from(lut.subarray(3 * k, 3 * k + 3));

describe('colour scales against the published colormap tables', () => {
  it('viridis entries 0, 128, 255', () => {
    const lut = lutOf('viridis');
    expect(entry(lut, 0)).toEqual(hex('#440154'));
    expect(entry(lut, 128)).toEqual(hex('#21918c'));
    expect(entry(lut, 255)).toEqual(hex('#fde725'));
  });

  it('magma ends', () => {
    const lut = lutOf('magma');
    expect(entry(lut, 0)).toEqual(hex('#000004'));
    expect(entry(lut, 255)).toEqual(hex('#fcfdbf'));
  });

  it('viridis and cividis get monotonically lighter (perceptually ordered): luma rises end to end', () => {
    for (const name of ['viridis', 'cividis'] as const) {
      const lut = lutOf(name);
      const luma = (k: number) => 0.2126 * lut[3 * k]! + 0.7152 * lut[3 * k + 1]! + 0.0722 * lut[3 * k + 2]!;
      for (let k = 8; k < 256; k += 8) expect(luma(k)).toBeGreaterThan(luma(k - 8));
    }
  });
});

describe('value → colour mapping', () => {
  it('maps limits to the ends, clamps outside, keeps NaN transparent', () => {
    expect(colorOf('viridis', 2, 2, 4)).toEqual(hex('#440154'));
    expect(colorOf('viridis', 4, 2, 4)).toEqual(hex('#fde725'));
    expect(colorOf('viridis', -10, 2, 4)).toEqual(hex('#440154'));
    expect(colorOf('viridis', 99, 2, 4)).toEqual(hex('#fde725'));
    expect(colorOf('viridis', 3, 2, 4)).toEqual(hex('#21918c'));
    expect(colorOf('viridis', Number.NaN, 2, 4)).toBeNull();
    expect(normalise(2.5, 2, 4)).toBe(0.25);
  });

  it('paints a raster row for row (row 0 = bottom stays row 0) with NaN as alpha 0', () => {
    const rgba = paintRaster(new Float32Array([0, 1, Number.NaN, 0.5]), 2, 2, 'viridis', 0, 1);
    expect(Array.from(rgba.subarray(0, 4))).toEqual([...hex('#440154'), 255]);
    expect(Array.from(rgba.subarray(4, 8))).toEqual([...hex('#fde725'), 255]);
    expect(Array.from(rgba.subarray(8, 12))).toEqual([0, 0, 0, 0]);
    expect(Array.from(rgba.subarray(12, 16))).toEqual([...hex('#21918c'), 255]);
  });

  it('legend gradient runs from the low to the high colour', () => {
    const css = gradientCss('viridis', 2);
    expect(css).toBe('linear-gradient(to right, rgb(68,1,84) 0.0%, rgb(253,231,37) 100.0%)');
  });
});
