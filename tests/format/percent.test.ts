import { describe, expect, it } from 'vitest';
import { formatPercent } from '@/lib/format/percent';

// Display rule of our own: a density is shown in % with one decimal; values that round to zero show as 0.0 %.
describe('formatPercent', () => {
  it('never prints a negative zero', () => {
    expect(formatPercent(-1e-17)).toBe('0.0 %');
    expect(formatPercent(-0)).toBe('0.0 %');
    expect(formatPercent(-0.0004)).toBe('0.0 %');
  });
  it('keeps real values and signs', () => {
    expect(formatPercent(0.4567)).toBe('45.7 %');
    expect(formatPercent(-0.012)).toBe('-1.2 %');
    expect(formatPercent(0.2, 2)).toBe('20.00 %');
    expect(formatPercent(Number.NaN)).toBe('—');
  });
});
