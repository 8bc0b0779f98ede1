'use client';

import { useQuery } from '@tanstack/react-query';
import { useCallback, useEffect, useMemo, useRef, useState } from 'react';
import { useFindingSelection } from '@/components/analysis/finding-selection';
import { apiJson } from '@/components/pipeline/api-client';
import { decodeGrid, type GridMap } from '@/lib/pipeline/grid-file';
import { finiteRange, paintCoverage, paintRaster } from '@/lib/viewer/color-scale';
import { mapKindInfo, sampleAt } from '@/lib/viewer/map-kinds';
import { fitView, focusOn, layoutToScreen, panBy, scaleBar, screenToLayout, zoomAbout, type View } from '@/lib/viewer/view-transform';
import type { ViewerInfo } from '@/lib/viewer/viewer-source';
import { FlagTooltip, type HoverMark } from './flag-tooltip';
import type { ViewerScene } from './pixi-scene';
import { Legend, MarkKey, Readout, WhatIfPanel, type ReadoutRow } from './viewer-panels';
import { POLYGON_BUDGET, usePolygonLod } from './use-polygon-lod';
import { useFlagMarks } from './use-flag-marks';
import { useWhatIf } from './use-what-if';
import { WhatIfSaveButton } from './whatif-save-button';

const HEIGHT = 560;

type MapInfo = { name: string; kind: string; unit: string; url: string };
type LoadedMap = { info: MapInfo; grid: GridMap };


async function fetchGrid(info: MapInfo): Promise<LoadedMap> {
  const res = await fetch(info.url, { credentials: 'same-origin' });
  if (!res.ok) throw new Error(`map ${info.name}: HTTP ${res.status}`);
  return { info, grid: decodeGrid(new Uint8Array(await res.arrayBuffer())) };
}

export function CanvasViewer({ analysisId, onFailure }: { analysisId: string; onFailure: (why: string) => void }) {
  const base = `/api/v1/analyses/${analysisId}`;
  const hostRef = useRef<HTMLDivElement>(null);
  const sceneRef = useRef<ViewerScene | null>(null);
  const viewRef = useRef<View | null>(null);
  const [ready, setReady] = useState(false);
  const [view, setViewState] = useState<View | null>(null);
  const [maps, setMaps] = useState<LoadedMap[]>([]);
  const [current, setCurrent] = useState<string>('risk');
  const [limits, setLimits] = useState<Record<string, [number, number]>>({});
  const [opacity, setOpacity] = useState(0.75);
  const [cursor, setCursor] = useState<[number, number] | null>(null);
  const [hover, setHover] = useState<HoverMark | null>(null);
  const [hiddenLayers, setHiddenLayers] = useState<Set<number>>(new Set());
  const [showMarks, setShowMarks] = useState(true);
  const { selected, select } = useFindingSelection();

  const info = useQuery({ queryKey: ['analysis', analysisId, 'viewer'], queryFn: () => apiJson<ViewerInfo>(`${base}/viewer`) });
  const results = useQuery({ queryKey: ['analysis', analysisId, 'viewer-maps'], queryFn: () => apiJson<{ maps: MapInfo[] }>(`${base}/results?limit=1`) });

  // --- scene: built once, destroyed on unmount -------------------------------------------------------------
  useEffect(() => {
    const host = hostRef.current;
    if (!host) return;
    let cancelled = false;
    let scene: ViewerScene | null = null;
    void import('./pixi-scene')
      .then(async ({ ViewerScene }) => {
        if (cancelled) return;
        scene = new ViewerScene();
        await scene.init(host, Math.max(200, host.clientWidth), HEIGHT);
        if (cancelled) return scene.destroy();
        sceneRef.current = scene;
        setReady(true);
      })
      .catch((err: unknown) => !cancelled && onFailure(err instanceof Error ? err.message : String(err)));
    return () => {
      cancelled = true;
      sceneRef.current = null;
      scene?.destroy();
    };
  }, [onFailure]);

  const applyView = useCallback((v: View) => {
    viewRef.current = v;
    sceneRef.current?.setView(v);
    setViewState(v);
  }, []);
  // Hook for the by-hand benchmark (bench/viewer.bench.ts) only: ?bench=1 exposes the view and the scene.
  useEffect(() => {
    if (!ready || new URLSearchParams(window.location.search).get('bench') !== '1') return;
    (window as unknown as Record<string, unknown>).__trenchantViewer = { scene: sceneRef.current, applyView, view: () => viewRef.current };
  }, [ready, applyView]);

  const fit = useCallback(() => {
    const host = hostRef.current;
    const box = info.data?.dieBboxUm;
    if (host && box) applyView(fitView(box, Math.max(200, host.clientWidth), HEIGHT));
  }, [info.data, applyView]);

  useEffect(() => {
    if (ready && info.data && !viewRef.current) fit();
  }, [ready, info.data, fit]);

  useEffect(() => {
    const host = hostRef.current;
    if (!host || !ready) return;
    const ro = new ResizeObserver(() => {
      const v = viewRef.current;
      if (v && host.clientWidth > 0 && host.clientWidth !== v.width) applyView({ ...v, width: host.clientWidth });
    });
    ro.observe(host);
    return () => ro.disconnect();
  }, [ready, applyView]);

  // --- maps ---------------------------------------------------------------------------------------------------
  useEffect(() => {
    if (!results.data) return;
    let cancelled = false;
    const list = results.data.maps;
    const first = list.find((m) => m.name === 'risk') ?? list[0];
    // The shown map first, then the rest for the readout.
    const order = first ? [first, ...list.filter((m) => m !== first)] : list;
    void (async () => {
      for (const m of order) {
        try {
          const loaded = await fetchGrid(m);
          if (cancelled) return;
          setMaps((prev) => (prev.some((p) => p.info.name === m.name) ? prev : [...prev, loaded]));
        } catch {
          /* one missing map must not stop the others; the readout shows it as absent */
        }
      }
    })();
    return () => {
      cancelled = true;
    };
  }, [results.data]);

  const coverage = maps.find((m) => m.info.kind === 'coverage');
  const coverageGrid = useMemo(() => (coverage ? { values: coverage.grid.values, grid: coverage.grid.grid } : null), [coverage]);
  const { whatIf, storedMargin, status: whatIfStatus, baseParams, run: runWhatIf, reset: resetWhatIf } = useWhatIf(info.data, coverageGrid, base, maps.length > 0 && maps.length === (results.data?.maps.length ?? -1));
  const shownMaps = useMemo(() => {
    const list: { name: string; kind: string; unit: string; values: ArrayLike<number>; grid: GridMap['grid']; whatIf: boolean }[] = [];
    for (const m of maps) {
      const w = whatIf && (m.info.kind === 'predicted-depth' ? whatIf.depth : m.info.kind === 'risk' ? whatIf.risk : null);
      list.push({ name: m.info.name, kind: m.info.kind, unit: m.grid.unit, values: w || m.grid.values, grid: m.grid.grid, whatIf: Boolean(w) });
    }
    const margin = whatIf?.margin ?? storedMargin;
    if (margin && coverage) list.push({ name: 'depth-margin', kind: 'depth-margin', unit: 'um', values: margin, grid: coverage.grid.grid, whatIf: Boolean(whatIf?.margin) });
    return list;
  }, [maps, whatIf, storedMargin, coverage]);
  const shown = shownMaps.find((m) => m.name === current) ?? shownMaps[0];
  const dataRange = useMemo(() => (shown ? finiteRange(shown.values) : null), [shown]);
  const kindInfo = mapKindInfo(shown?.kind ?? '');
  const lim: [number, number] = (shown && limits[shown.name]) ?? kindInfo.fixed ?? dataRange ?? [0, 1];

  useEffect(() => {
    const scene = sceneRef.current;
    if (!ready || !scene || !shown) return;
    const g = shown.grid;
    scene.setHeat({ rgba: paintRaster(shown.values, g.nx, g.ny, kindInfo.scale, lim[0], lim[1]), nx: g.nx, ny: g.ny, x0Um: g.x0Um, y0Um: g.y0Um, pixelUm: g.pixelUm }, opacity);
    // opacity has its own effect; repainting on it would be wasted work
    // eslint-disable-next-line react-hooks/exhaustive-deps
  }, [ready, shown, lim[0], lim[1], kindInfo.scale]);
  useEffect(() => sceneRef.current?.setHeatOpacity(opacity), [opacity]);

  useEffect(() => {
    const scene = sceneRef.current;
    if (!ready || !scene || !coverage) return;
    const g = coverage.grid.grid;
    scene.setCoverage({ rgba: paintCoverage(coverage.grid.values, g.nx, g.ny), nx: g.nx, ny: g.ny, x0Um: g.x0Um, y0Um: g.y0Um, pixelUm: g.pixelUm });
  }, [ready, coverage]);

  const mode = usePolygonLod({ ready, view, sceneRef, base, polygonCount: info.data?.polygonCount ?? null, dieBboxUm: info.data?.dieBboxUm ?? null, hiddenLayers });

  // --- flags ----------------------------------------------------------------------------------------------------
  const focus = useCallback(
    (xUm: number, yUm: number, bboxUm: [number, number, number, number]) => {
      const v = viewRef.current;
      if (!v) return;
      applyView(focusOn(v, xUm, yUm, bboxUm));
      hostRef.current?.scrollIntoView({ block: 'nearest', behavior: 'smooth' });
    },
    [applyView],
  );
  const marks = useFlagMarks({ base, analysisId, ready, sceneRef, whatIfFlags: whatIf?.flags ?? null, onFocus: focus });
  const hitAt = (sx: number, sy: number): HoverMark | null => {
    const hit = showMarks ? sceneRef.current?.hitTest(sx, sy) : null;
    const record = hit ? marks.recordAt(hit.index) : null;
    if (!hit || !record || !marks.source) return null;
    return { record, source: marks.source(hit.index), merged: hit.merged, sx, sy };
  };

  // --- input ------------------------------------------------------------------------------------------------------
  const drag = useRef<{ x: number; y: number; moved: boolean } | null>(null);
  // Touch pinch: the two active pointers; zoom by their distance ratio about their midpoint.
  const touches = useRef(new Map<number, [number, number]>());
  const local = (e: { clientX: number; clientY: number }): [number, number] => {
    const r = hostRef.current!.getBoundingClientRect();
    return [e.clientX - r.left, e.clientY - r.top];
  };
  const onPointerDown = (e: React.PointerEvent) => {
    touches.current.set(e.pointerId, local(e));
    hostRef.current?.setPointerCapture(e.pointerId);
    hostRef.current?.focus();
    drag.current = { x: e.clientX, y: e.clientY, moved: false };
  };
  const onPointerMove = (e: React.PointerEvent) => {
    const v = viewRef.current;
    if (!v) return;
    const [sx, sy] = local(e);
    const t = touches.current;
    if (t.size === 2 && t.has(e.pointerId)) {
      const [other] = [...t.entries()].filter(([id]) => id !== e.pointerId);
      const before = t.get(e.pointerId)!;
      const o = other![1];
      const d0 = Math.hypot(before[0] - o[0], before[1] - o[1]);
      const d1 = Math.hypot(sx - o[0], sy - o[1]);
      t.set(e.pointerId, [sx, sy]);
      if (d0 > 0 && d1 > 0) applyView(zoomAbout(v, (sx + o[0]) / 2, (sy + o[1]) / 2, d1 / d0));
      if (drag.current) drag.current.moved = true;
      return;
    }
    if (t.has(e.pointerId)) t.set(e.pointerId, [sx, sy]);
    const d = drag.current;
    if (d && (d.moved || Math.abs(e.clientX - d.x) + Math.abs(e.clientY - d.y) > 3)) {
      d.moved = true;
      applyView(panBy(v, e.clientX - d.x, e.clientY - d.y));
      d.x = e.clientX;
      d.y = e.clientY;
      return;
    }
    setCursor(screenToLayout(v, sx, sy));
    setHover(hitAt(sx, sy));
  };
  const onPointerUp = (e: React.PointerEvent) => {
    touches.current.delete(e.pointerId);
    const d = drag.current;
    drag.current = null;
    if (!d || d.moved || !viewRef.current) return;
    const [sx, sy] = local(e);
    const hit = hitAt(sx, sy);
    if (hit) select({ flagId: hit.record.key, xUm: hit.record.xUm, yUm: hit.record.yUm, bboxUm: [...hit.record.bboxUm], source: 'canvas' });
  };
  useEffect(() => {
    const host = hostRef.current;
    if (!host) return;
    // Non-passive so the page does not scroll while zooming.
    const onWheel = (e: WheelEvent) => {
      const v = viewRef.current;
      if (!v) return;
      e.preventDefault();
      const r = host.getBoundingClientRect();
      applyView(zoomAbout(v, e.clientX - r.left, e.clientY - r.top, Math.exp(-e.deltaY * (e.deltaMode === 1 ? 0.05 : 0.0015))));
    };
    host.addEventListener('wheel', onWheel, { passive: false });
    return () => host.removeEventListener('wheel', onWheel);
  }, [applyView]);
  const onKeyDown = (e: React.KeyboardEvent) => {
    const v = viewRef.current;
    if (!v) return;
    const step = 60;
    const keys: Record<string, () => void> = {
      '+': () => applyView(zoomAbout(v, v.width / 2, v.height / 2, 1.5)),
      '=': () => applyView(zoomAbout(v, v.width / 2, v.height / 2, 1.5)),
      '-': () => applyView(zoomAbout(v, v.width / 2, v.height / 2, 1 / 1.5)),
      ArrowLeft: () => applyView(panBy(v, step, 0)),
      ArrowRight: () => applyView(panBy(v, -step, 0)),
      ArrowUp: () => applyView(panBy(v, 0, step)),
      ArrowDown: () => applyView(panBy(v, 0, -step)),
      f: fit,
      '0': fit,
      Escape: () => select(null),
      m: () => {
        const k = shownMaps.findIndex((m) => m.name === shown?.name);
        const next = shownMaps[(k + 1) % Math.max(1, shownMaps.length)];
        if (next) setCurrent(next.name);
      },
    };
    const act = keys[e.key];
    if (act) {
      e.preventDefault();
      act();
    }
  };

  const exportPng = async () => {
    const blob = await sceneRef.current?.exportPng();
    if (!blob) return;
    const a = document.createElement('a');
    a.href = URL.createObjectURL(blob);
    a.download = `trenchant-${analysisId}-${shown?.name ?? 'map'}.png`;
    a.click();
    setTimeout(() => URL.revokeObjectURL(a.href), 10_000);
  };

  const readout: ReadoutRow[] = cursor ? shownMaps.map((m) => ({ name: m.name, kind: m.kind, unit: m.unit, whatIf: m.whatIf, value: sampleAt(m.values, m.grid, cursor[0], cursor[1]) })) : shownMaps.map((m) => ({ name: m.name, kind: m.kind, unit: m.unit, whatIf: m.whatIf, value: Number.NaN }));
  const bar = view ? scaleBar(view.scale, 140) : null;
  const layers = info.data?.layers ?? [];

  return (
    <div className="grid gap-3" data-testid="canvas-viewer" data-mode={mode} data-ready={ready && maps.length > 0 ? 'yes' : 'no'} data-view={view ? JSON.stringify({ cx: view.cx, cy: view.cy, scale: view.scale, width: view.width, height: view.height }) : ''} data-selected={selected?.flagId ?? ''}>
      <div className="flex flex-wrap items-center gap-2 text-xs">
        <div className="flex flex-wrap gap-1" role="tablist" aria-label="map">
          {shownMaps.map((m) => (
            <button key={m.name} type="button" role="tab" aria-selected={shown?.name === m.name} onClick={() => setCurrent(m.name)} data-testid={`map-${m.name}`} className={`rounded px-2 py-1 ${shown?.name === m.name ? 'bg-ink-900 text-wafer-50' : 'text-ink-700 hover:bg-wafer-200/60'}`}>
              {mapKindInfo(m.kind).label}
              {m.name !== m.kind ? ` ${m.name.replace(`${m.kind}-`, '')}` : ''}
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
      <div className="grid gap-3 lg:grid-cols-[1fr_260px]">
        <div className="relative h-[560px] self-start">
          <div
            ref={hostRef}
            tabIndex={0}
            role="application"
            aria-label="die map: drag to pan, wheel to zoom, F to fit, arrows to pan, + and - to zoom, M for the next map"
            className="relative h-[560px] w-full cursor-crosshair touch-none overflow-hidden rounded border border-wafer-300 bg-wafer-100 outline-none focus-visible:ring-2 focus-visible:ring-copper-600"
            onPointerDown={onPointerDown}
            onPointerMove={onPointerMove}
            onPointerUp={onPointerUp}
            onPointerCancel={(e) => touches.current.delete(e.pointerId)}
            onPointerLeave={() => {
              setCursor(null);
              setHover(null);
            }}
            onKeyDown={onKeyDown}
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
          {shown ? <Legend mapName={shown.name} kind={shown.kind} scale={kindInfo.scale} lo={lim[0]} hi={lim[1]} dataRange={dataRange} whatIf={shown.whatIf} onLimits={(lo, hi) => Number.isFinite(lo) && Number.isFinite(hi) && setLimits((p) => ({ ...p, [shown.name]: [lo, hi] }))} onReset={() => setLimits((p) => Object.fromEntries(Object.entries(p).filter(([k]) => k !== shown.name)))} /> : <p className="text-xs text-ink-500">Loading maps…</p>}
          <Readout at={cursor} rows={readout} />
          <MarkKey />
          <label className="flex items-center gap-1 text-xs text-ink-700">
            <input
              type="checkbox"
              checked={showMarks}
              onChange={(e) => {
                setShowMarks(e.target.checked);
                sceneRef.current?.setMarksVisible(e.target.checked);
              }}
              data-testid="show-marks"
            />
            flag marks
          </label>
          <p className="-mt-2 text-xs text-ink-500" data-testid="mark-count" data-total={marks.flags?.count ?? ''} data-in-view={marks.placed.inView} data-drawn={marks.placed.drawn}>
            {marks.flags ? `${marks.flags.count.toLocaleString('en')} flags${whatIf ? ' (what-if)' : ''}; ${marks.placed.inView.toLocaleString('en')} in view, ${marks.placed.drawn.toLocaleString('en')} marks drawn${marks.placed.drawn < marks.placed.inView ? ' (close ones merged, worst on top; zoom in to separate)' : ''}` : marks.error ? `flags could not be loaded (${marks.error})` : 'loading flags…'}
          </p>
          {layers.length > 0 ? (
            <div className="text-xs text-ink-700" data-testid="layers">
              <p className="font-semibold text-ink-900">Layers</p>
              {layers.map((l, k) => (
                <label key={k} className="mr-3 inline-flex items-center gap-1">
                  <input
                    type="checkbox"
                    checked={!hiddenLayers.has(k)}
                    onChange={(e) => {
                      const next = new Set(hiddenLayers);
                      if (e.target.checked) next.delete(k);
                      else next.add(k);
                      setHiddenLayers(next);
                      sceneRef.current?.setLayerVisible(k, e.target.checked);
                    }}
                  />
                  {l.layer}/{l.datatype}
                  {l.etch ? ' (etch)' : ''}
                </label>
              ))}
            </div>
          ) : null}
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
