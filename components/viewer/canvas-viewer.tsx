'use client';

import { useQuery } from '@tanstack/react-query';
import { useCallback, useState } from 'react';
import { useFindingSelection } from '@/components/analysis/finding-selection';
import { apiJson } from '@/components/pipeline/api-client';
import { mapKindInfo, mapVariantLabel, sampleAt } from '@/lib/viewer/map-kinds';
import { focusOn, scaleBar, screenToLayout, type View } from '@/lib/viewer/view-transform';
import type { ViewerInfo } from '@/lib/viewer/viewer-source';
import { FlagTooltip, type HoverMark } from './flag-tooltip';
import { useFlagMarks } from './use-flag-marks';
import { POLYGON_BUDGET, usePolygonLod } from './use-polygon-lod';
import { useViewerInput } from './use-viewer-input';
import { useLoadedMaps, useShownMaps } from './use-viewer-maps';
import { useViewerScene } from './use-viewer-scene';
import { useWhatIf } from './use-what-if';
import { MarkAndLayerControls } from './viewer-layer-controls';
import { Legend, MarkKey, Readout, WhatIfPanel, type ReadoutRow } from './viewer-panels';
import { WhatIfSaveButton } from './whatif-save-button';

/** The die map: scene, maps, flags, what-if and input, each in its own hook; this file lays them out. */
export function CanvasViewer({ analysisId, onFailure }: { analysisId: string; onFailure: (why: string) => void }) {
  const base = `/api/v1/analyses/${analysisId}`;
  const [opacity, setOpacity] = useState(0.75);
  const [cursor, setCursor] = useState<[number, number] | null>(null);
  const [hover, setHover] = useState<HoverMark | null>(null);
  const [hiddenLayers, setHiddenLayers] = useState<Set<number>>(new Set());
  const [showMarks, setShowMarks] = useState(true);
  const { selected, select } = useFindingSelection();

  const info = useQuery({ queryKey: ['analysis', analysisId, 'viewer'], queryFn: () => apiJson<ViewerInfo>(`${base}/viewer`) });
  const { hostRef, sceneRef, viewRef, ready, view, applyView, fit } = useViewerScene(info.data?.dieBboxUm ?? null, onFailure);
  const { maps, coverage, coverageGrid, allLoaded } = useLoadedMaps(analysisId, base);
  const { whatIf, storedMargin, status: whatIfStatus, baseParams, run: runWhatIf, reset: resetWhatIf } = useWhatIf(info.data, coverageGrid, base, allLoaded);
  const { shownMaps, shown, dataRange, kindInfo, lim, setCurrent, setLimit, resetLimit, nextMap } = useShownMaps({ maps, coverage, whatIf, storedMargin, ready, sceneRef, opacity });
  const mode = usePolygonLod({ ready, view, sceneRef, base, polygonCount: info.data?.polygonCount ?? null, dieBboxUm: info.data?.dieBboxUm ?? null, hiddenLayers });

  const focus = useCallback(
    (xUm: number, yUm: number, bboxUm: [number, number, number, number]) => {
      const v = viewRef.current;
      if (!v) return;
      applyView(focusOn(v, xUm, yUm, bboxUm));
      hostRef.current?.scrollIntoView({ block: 'nearest', behavior: 'smooth' });
    },
    [applyView, viewRef, hostRef],
  );
  const marks = useFlagMarks({ base, analysisId, ready, sceneRef, whatIfFlags: whatIf?.flags ?? null, onFocus: focus });
  const hitAt = (sx: number, sy: number): HoverMark | null => {
    const hit = showMarks ? sceneRef.current?.hitTest(sx, sy) : null;
    const record = hit ? marks.recordAt(hit.index) : null;
    if (!hit || !record || !marks.source) return null;
    return { record, source: marks.source(hit.index), merged: hit.merged, sx, sy };
  };
  const input = useViewerInput({
    hostRef,
    viewRef,
    applyView,
    fit,
    onHover: (sx, sy, v: View) => {
      setCursor(screenToLayout(v, sx, sy));
      setHover(hitAt(sx, sy));
    },
    onClick: (sx, sy) => {
      const hit = hitAt(sx, sy);
      if (hit) select({ flagId: hit.record.key, xUm: hit.record.xUm, yUm: hit.record.yUm, bboxUm: [...hit.record.bboxUm], source: 'canvas' });
    },
    onEscape: () => select(null),
    onNextMap: nextMap,
  });

  const exportPng = async () => {
    const blob = await sceneRef.current?.exportPng();
    if (!blob) return;
    const a = document.createElement('a');
    a.href = URL.createObjectURL(blob);
    a.download = `trenchant-${analysisId}-${shown?.name ?? 'map'}.png`;
    a.click();
    setTimeout(() => URL.revokeObjectURL(a.href), 10_000);
  };

  const readout: ReadoutRow[] = shownMaps.map((m) => ({ name: m.name, kind: m.kind, unit: m.unit, whatIf: m.whatIf, value: cursor ? sampleAt(m.values, m.grid, cursor[0], cursor[1]) : Number.NaN }));
  const bar = view ? scaleBar(view.scale, 140) : null;

  return (
    <div className="grid grid-cols-1 gap-3" data-testid="canvas-viewer" data-mode={mode} data-ready={ready && maps.length > 0 ? 'yes' : 'no'} data-view={view ? JSON.stringify({ cx: view.cx, cy: view.cy, scale: view.scale, width: view.width, height: view.height }) : ''} data-selected={selected?.flagId ?? ''}>
      <div className="flex flex-wrap items-center gap-2 text-xs">
        <div className="flex flex-wrap gap-1" role="tablist" aria-label="map">
          {shownMaps.map((m) => (
            <button key={m.name} type="button" role="tab" aria-selected={shown?.name === m.name} onClick={() => setCurrent(m.name)} data-testid={`map-${m.name}`} className={`rounded px-2 py-1 ${shown?.name === m.name ? 'bg-ink-900 text-wafer-50' : 'text-ink-700 hover:bg-wafer-200/60'}`}>
              {mapKindInfo(m.kind).label}
              {m.name !== m.kind ? ` ${mapVariantLabel(m.name, m.kind)}` : ''}
              {m.whatIf ? ' (what-if)' : ''}
            </button>
          ))}
        </div>
        <label className="ml-auto flex items-center gap-1 text-ink-700">
          opacity
          <input type="range" min={0} max={1} step={0.05} value={opacity} onChange={(e) => setOpacity(Number(e.target.value))} data-testid="opacity" />
        </label>
        <button type="button" className="rounded border border-wafer-300 px-2 py-1" onClick={fit} data-testid="fit">
          Fit (F)
        </button>
        <button type="button" className="rounded border border-wafer-300 px-2 py-1" onClick={() => void exportPng()} data-testid="export-png">
          Export PNG
        </button>
      </div>
      {whatIf ? (
        <p className="rounded bg-copper-600 px-3 py-1 text-xs font-semibold text-white" data-testid="whatif-banner">
          WHAT-IF: depth, margin, risk and opening flags below are recomputed in the browser from changed model parameters — not the stored analysis until saved as a new analysis.
        </p>
      ) : null}
      <div className="grid grid-cols-1 gap-3 lg:grid-cols-[minmax(0,1fr)_260px]">
        <div className="relative h-[560px] self-start">
          <div
            ref={hostRef}
            tabIndex={0}
            role="application"
            aria-label="die map: drag to pan, wheel to zoom, F to fit, arrows to pan, + and - to zoom, M for the next map"
            className="relative h-[560px] w-full cursor-crosshair touch-none overflow-hidden rounded border border-wafer-300 bg-wafer-100 outline-none focus-visible:ring-2 focus-visible:ring-copper-600"
            onPointerDown={input.onPointerDown}
            onPointerMove={input.onPointerMove}
            onPointerUp={input.onPointerUp}
            onPointerCancel={input.onPointerCancel}
            onPointerLeave={() => {
              setCursor(null);
              setHover(null);
            }}
            onKeyDown={input.onKeyDown}
            data-testid="viewer-host"
          />
          {bar ? (
            <div className="pointer-events-none absolute bottom-3 left-3 rounded bg-white/85 px-2 py-1 text-xs text-ink-900" data-testid="scale-bar">
              <div className="h-1.5 border-x-2 border-b-2 border-ink-900" style={{ width: `${bar.px}px` }} />
              {bar.label}
            </div>
          ) : null}
          <div className="pointer-events-none absolute top-2 left-2 rounded bg-white/85 px-2 py-0.5 text-[11px] text-ink-700" data-testid="lod-mode">
            {mode === 'polygons' ? 'polygons in view' : mode === 'raster' ? `coverage raster (more than ${POLYGON_BUDGET.toLocaleString('en')} polygons here; zoom in)` : 'loading polygons…'}
          </div>
          {hover ? <FlagTooltip hover={hover} base={base} width={view?.width ?? 600} whatIfMessage={(k) => whatIf?.flags[k]?.message} /> : null}
        </div>
        <div className="grid content-start gap-3">
          {shown ? <Legend mapName={shown.name} kind={shown.kind} scale={kindInfo.scale} lo={lim[0]} hi={lim[1]} dataRange={dataRange} whatIf={shown.whatIf} onLimits={setLimit} onReset={resetLimit} /> : <p className="text-xs text-ink-500">Loading maps…</p>}
          <Readout at={cursor} rows={readout} />
          <MarkKey />
          <MarkAndLayerControls
            showMarks={showMarks}
            onShowMarks={(on) => {
              setShowMarks(on);
              sceneRef.current?.setMarksVisible(on);
            }}
            flagCount={marks.flags?.count ?? null}
            flagError={marks.error}
            whatIf={Boolean(whatIf)}
            placed={marks.placed}
            layers={info.data?.layers ?? []}
            hiddenLayers={hiddenLayers}
            onLayer={(k, visible) => {
              const next = new Set(hiddenLayers);
              if (visible) next.delete(k);
              else next.add(k);
              setHiddenLayers(next);
              sceneRef.current?.setLayerVisible(k, visible);
            }}
          />
          {baseParams ? <WhatIfPanel base={baseParams} params={whatIf?.params ?? baseParams} active={Boolean(whatIf)} status={whatIfStatus} onChange={runWhatIf} onReset={resetWhatIf} /> : null}
          {whatIf ? <WhatIfSaveButton base={base} params={whatIf.params} /> : null}
        </div>
      </div>
      <p className="text-xs text-ink-500">
        Predictions are advisory estimates from the process model; the fab&apos;s process of record and the foundry&apos;s rules decide. Map pixels are {coverage ? `${coverage.grid.grid.pixelUm} µm` : '…'} wide: features smaller than a pixel are averaged.
      </p>
    </div>
  );
}
