import { describe, expect, it } from 'vitest';
import { mapFileName } from '@/lib/pipeline/map-files';
import { mapVariantLabel } from '@/lib/viewer/map-kinds';

// Map names on screen use the summary's "window/step µm" words, not the stored file-name form "100um-50um".
describe('mapVariantLabel', () => {
  it('reads a window-density name as window/step in µm', () => {
    expect(mapVariantLabel('window-density-100um-50um', 'window-density')).toBe('100/50 µm');
    expect(mapVariantLabel('window-density-2.5um-1.25um', 'window-density')).toBe('2.5/1.25 µm');
    // the name the pipeline stores (file name without .trgrid, lib/jobs/save-results.ts)
    const stored = mapFileName({ kind: 'window-density', meta: { windowUm: 700, stepUm: 70 } } as Parameters<typeof mapFileName>[0]).replace(/\.trgrid$/, '');
    expect(mapVariantLabel(stored, 'window-density')).toBe('700/70 µm');
  });
  it('is empty for a name equal to its kind and keeps any other suffix', () => {
    expect(mapVariantLabel('risk', 'risk')).toBe('');
    expect(mapVariantLabel('predicted-depth-whatif', 'predicted-depth')).toBe('whatif');
  });
});
