/**
 * Densities are open-area fractions inside Trenchant and percentages on screen. Round-off (FFT convolution,
 * summed-area differences) leaves values like -1e-17, which must print as "0.0 %", never "-0.0 %".
 */
export function formatPercent(fraction: number, digits = 1): string {
  if (!Number.isFinite(fraction)) return '—';
  const half = 0.5 * 10 ** -digits; // half of the last printed digit, in %
  const value = Math.abs(fraction * 100) < half ? 0 : fraction * 100;
  return `${value.toFixed(digits)} %`;
}
