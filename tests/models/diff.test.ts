import { describe, expect, it } from 'vitest';
import { diffModelDocuments } from '@/lib/models/diff';

// What the version page lists as "Changes between versions" (hand-made documents; no external source needed).
describe('diffModelDocuments', () => {
  it('names calibration summary fields in words and rounds float noise in ranges', () => {
    const changes = diffModelDocuments(
      { openRateUmPerMin: 3.6 },
      { openRateUmPerMin: 3.6633096781354544, calibration: { date: '2026-12-03', aspectRatio: [0.07548250000000001, 37.08], widthUm: [1, 400], pointCount: 140 } },
    );
    const byPath = new Map(changes.map((c) => [c.path, c]));
    expect(byPath.get('calibration.aspectRatio')).toMatchObject({ label: 'Calibrated aspect ratios', after: '0.0754825 – 37.08', change: 'added' });
    expect(byPath.get('calibration.widthUm')).toMatchObject({ label: 'Calibrated widths', unit: 'µm', after: '1 – 400' });
    expect(byPath.get('calibration.date')?.label).toBe('Calibration date');
    expect(byPath.get('calibration.pointCount')?.label).toBe('Calibration points');
    // single numbers stay exact in the diff (the page rounds them for display)
    expect(byPath.get('openRateUmPerMin')).toMatchObject({ before: 3.6, after: 3.6633096781354544, unit: 'µm/min' });
  });
});
