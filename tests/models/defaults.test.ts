import { describe, expect, it } from 'vitest';
import { defaultModelOption, projectEtchKind, type ModelOption } from '@/lib/models/defaults';

describe('new-analysis defaults', () => {
  it('reads the etch kind from the project (demo projects)', () => {
    expect(projectEtchKind({ name: 'Kestrel-3 gyroscope die', description: 'Vibratory MEMS gyroscope: deep silicon trench release of comb drives' })).toBe('trench');
    expect(projectEtchKind({ name: 'Viaduct TSV test chip', description: 'Through-silicon-via daisy chains' })).toBe('hole');
    expect(projectEtchKind({ name: 'Spring test', description: '' })).toBe('trench');
  });
  const options: ModelOption[] = [
    { id: 'cyclic-via-v1', modelId: 'm-via', featureKind: 'hole', mode: 'cyclic', calibrated: false, latest: true },
    { id: 'trench-v2', modelId: 'm-trench', featureKind: 'trench', mode: 'continuous', calibrated: true, latest: true },
    { id: 'trench-v1', modelId: 'm-trench', featureKind: 'trench', mode: 'continuous', calibrated: false, latest: false },
    { id: 'minimal-v1', modelId: 'm-min', featureKind: 'trench', mode: 'continuous', calibrated: false, latest: true },
  ];
  it('picks a continuous, calibrated trench model for trenches, not the first id', () => {
    expect(defaultModelOption(options, 'trench')).toBe('trench-v2');
  });
  it('picks the via model for holes', () => {
    expect(defaultModelOption(options, 'hole')).toBe('cyclic-via-v1');
  });
  it('prefers the model the project used last (its newest version)', () => {
    expect(defaultModelOption(options, 'trench', 'm-min')).toBe('minimal-v1');
  });
});
