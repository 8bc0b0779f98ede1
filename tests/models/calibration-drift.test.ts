import { describe, expect, it } from 'vitest';
import { editedSinceCalibration } from '@/lib/models/calibration-drift';

// A calibration record vouches for the values it fitted; hand-made documents, no external source needed.
const calibrated = {
  openRateUmPerMin: 3.6633096781354544,
  reactionProbability: 0.20977412412769098,
  calibration: {
    date: '2026-12-03',
    parameters: { openRateUmPerMin: { value: 3.6633096781354544, standardError: 0.0103 }, reactionProbability: { value: 0.20977412412769098, standardError: 0.0038 } },
  },
};

describe('editedSinceCalibration', () => {
  it('is empty while every fitted parameter keeps its fitted value, and without a calibration', () => {
    expect(editedSinceCalibration(calibrated)).toEqual([]);
    expect(editedSinceCalibration({ openRateUmPerMin: 4 })).toEqual([]);
  });
  it('names a fitted parameter typed over after the fit, with both values and the unit', () => {
    expect(editedSinceCalibration({ ...calibrated, openRateUmPerMin: 4.2 })).toEqual([{ parameter: 'openRateUmPerMin', label: 'Open-field etch rate', unit: 'µm/min', fitted: 3.6633096781354544, current: 4.2 }]);
  });
});
