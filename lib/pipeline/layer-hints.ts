/**
 * Plausibility notes on the chosen etch layers, from the summary alone. A die-outline or keep-out layer picked as the
 * etch layer (or the wrong polarity) gives results that look like numbers but say nothing about the etch: almost the
 * whole die open as one field, or no opening at all. The notes tell the user to check the choice before reading on.
 */
import { formatPercent } from '@/lib/format/percent';

/** Above this open fraction of the die the etch layer is more likely a boundary layer or the wrong polarity. */
export const MOSTLY_OPEN_FRACTION = 0.9;

export type LayerHintInput = {
  globalDensity: number;
  features: { count: number };
  layout: { etchLayers: readonly string[] };
  settings: { polarity: 'clear' | 'dark' };
};

export function layerHints(s: LayerHintInput): string[] {
  const layers = `${s.layout.etchLayers.length === 1 ? 'layer' : 'layers'} ${s.layout.etchLayers.join(', ')}`;
  const other = s.settings.polarity === 'clear' ? 'dark' : 'clear';
  if (s.features.count === 0) {
    return [`No opening on ${layers} (polarity ${s.settings.polarity}): nothing was etched, so there are no depths to check. Check that this is the etch layer, or try polarity ${other}.`];
  }
  if (s.globalDensity >= MOSTLY_OPEN_FRACTION) {
    return [
      `${formatPercent(s.globalDensity)} of the die is open on ${layers} (polarity ${s.settings.polarity}). Etch layers are rarely this open: check that this is not a die outline, fill or keep-out layer, and that the polarity should not be ${other}.`,
    ];
  }
  return [];
}
