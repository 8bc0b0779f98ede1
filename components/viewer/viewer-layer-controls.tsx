'use client';

import type { ViewerInfo } from '@/lib/viewer/viewer-source';

/** Flag-mark visibility with the count of flags (all, in view, drawn) and per-layer visibility. */
export function MarkAndLayerControls(props: {
  showMarks: boolean;
  onShowMarks: (show: boolean) => void;
  flagCount: number | null;
  flagError: string | null;
  whatIf: boolean;
  placed: { drawn: number; inView: number };
  layers: ViewerInfo['layers'];
  hiddenLayers: Set<number>;
  onLayer: (k: number, visible: boolean) => void;
}) {
  const { placed } = props;
  return (
    <>
      <label className="flex items-center gap-1 text-xs text-ink-700">
        <input type="checkbox" checked={props.showMarks} onChange={(e) => props.onShowMarks(e.target.checked)} data-testid="show-marks" />
        flag marks
      </label>
      <p className="-mt-2 text-xs text-ink-500" data-testid="mark-count" data-total={props.flagCount ?? ''} data-in-view={placed.inView} data-drawn={placed.drawn}>
        {props.flagCount !== null
          ? `${props.flagCount.toLocaleString('en')} flags${props.whatIf ? ' (what-if)' : ''}; ${placed.inView.toLocaleString('en')} in view, ${placed.drawn.toLocaleString('en')} marks drawn${placed.drawn < placed.inView ? ' (close ones merged, worst on top; zoom in to separate)' : ''}`
          : props.flagError
            ? `flags could not be loaded (${props.flagError})`
            : 'loading flags…'}
      </p>
      {props.layers.length > 0 ? (
        <div className="text-xs text-ink-700" data-testid="layers">
          <p className="font-semibold text-ink-900">Layers</p>
          {props.layers.map((l, k) => (
            <label key={k} className="mr-3 inline-flex items-center gap-1">
              <input type="checkbox" checked={!props.hiddenLayers.has(k)} onChange={(e) => props.onLayer(k, e.target.checked)} />
              {l.layer}/{l.datatype}
              {l.etch ? ' (etch)' : ''}
            </label>
          ))}
        </div>
      ) : null}
    </>
  );
}
