/**
 * Fitted parameters edited after the calibration. A draft made from a calibrated version keeps its calibration
 * record (date, R², ranges, covariance); if a fitted value is then typed over, that record describes values the
 * model no longer has, and "calibrated, R² 0.997" and the depth uncertainty would vouch for numbers nobody fitted.
 */
import { fieldOf } from './parameters';

export type CalibrationDrift = { parameter: string; label: string; unit: string; fitted: number; current: number };

/** Relative difference below which a value is the fitted one (a JSON round trip keeps doubles exact; this is slack). */
const SAME = 1e-9;

export function editedSinceCalibration(document: unknown): CalibrationDrift[] {
  const doc = document as { calibration?: { parameters?: Record<string, { value?: unknown }> } } & Record<string, unknown>;
  const fitted = doc.calibration?.parameters;
  if (!fitted) return [];
  const out: CalibrationDrift[] = [];
  for (const [parameter, p] of Object.entries(fitted)) {
    const current = doc[parameter];
    if (typeof p.value !== 'number' || typeof current !== 'number') continue;
    if (Math.abs(current - p.value) <= SAME * Math.max(Math.abs(p.value), Math.abs(current))) continue;
    const field = fieldOf(parameter);
    out.push({ parameter, label: field?.label ?? parameter, unit: field?.unit ?? '', fitted: p.value, current });
  }
  return out;
}
