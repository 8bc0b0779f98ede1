import { describe, expect, it } from 'vitest';
import { parseAnalysisSettings } from '@/lib/pipeline/settings';
import { describeSettings } from '@/lib/pipeline/settings-label';

// Labels are our own wording; the checks are that two differently configured runs read differently and that
// densities appear in % (the unit the summary uses), never as fractions.
describe('describeSettings', () => {
  it('names layers, windows, target and density limits in %', () => {
    const parsed = parseAnalysisSettings({
      etchLayers: [{ layer: 1, datatype: 0 }],
      densityWindows: [{ windowUm: 100, stepUm: 50 }],
      limits: { targetDepthUm: 80, minDensity: 0.2, maxDensity: 0.6, minWidthUm: 2 },
    });
    if (!parsed.ok) throw new Error('settings should parse');
    expect(describeSettings(parsed.settings)).toBe('layers 1/0 · windows 100/50 µm · target 80 µm · density 20–60 % · min width 2 µm');
  });
  it('says so when no density limit is set, and tells runs apart', () => {
    const a = parseAnalysisSettings({ etchLayers: [{ layer: 1, datatype: 0 }] });
    const b = parseAnalysisSettings({ etchLayers: [{ layer: 1, datatype: 0 }], limits: { maxDensity: 0.5 } });
    if (!a.ok || !b.ok) throw new Error('settings should parse');
    expect(describeSettings(a.settings)).toContain('no density limits');
    expect(describeSettings(b.settings)).toContain('density 0–50 %');
    expect(describeSettings(a.settings)).not.toBe(describeSettings(b.settings));
  });
  it('tolerates missing or foreign input', () => {
    expect(describeSettings(null)).toBe('no density limits');
    expect(describeSettings({ etchLayers: [{ layer: 2, datatype: 1 }], polarity: 'dark' })).toContain('layers 2/1 (dark field)');
  });
});
