import { describe, expect, it } from 'vitest';
import { layerHints, MOSTLY_OPEN_FRACTION } from '@/lib/pipeline/layer-hints';

// The thresholds are product choices (common practice, no source): etch layers of MEMS and TSV dies are open well
// below 90 % of the die; a layer open everywhere is a boundary layer or the wrong polarity.
const base = { globalDensity: 0.12, features: { count: 40 }, layout: { etchLayers: ['1/0'] }, settings: { polarity: 'clear' as const } };

describe('layerHints', () => {
  it('says nothing for an ordinary etch layer', () => {
    expect(layerHints(base)).toEqual([]);
    expect(layerHints({ ...base, globalDensity: MOSTLY_OPEN_FRACTION - 0.001 })).toEqual([]);
  });
  it('names a layer open over (almost) the whole die, its density and the other polarity', () => {
    const [h] = layerHints({ ...base, globalDensity: 1, features: { count: 1 }, layout: { etchLayers: ['100/0'] } });
    expect(h).toMatch(/^100\.0 % of the die is open on layer 100\/0 \(polarity clear\)/);
    expect(h).toMatch(/die outline/);
    expect(h).toMatch(/should not be dark/);
  });
  it('names the layers and the polarity when there is no opening at all', () => {
    const [h] = layerHints({ ...base, globalDensity: 0, features: { count: 0 }, layout: { etchLayers: ['1/0', '2/0'] }, settings: { polarity: 'dark' } });
    expect(h).toMatch(/^No opening on layers 1\/0, 2\/0 \(polarity dark\)/);
    expect(h).toMatch(/try polarity clear/);
  });
});
