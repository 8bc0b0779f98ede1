'use client';

import { useQuery } from '@tanstack/react-query';
import { useEffect, useMemo, useState, type RefObject } from 'react';
import { apiJson } from '@/components/pipeline/api-client';
import { decodeGrid, type GridMap } from '@/lib/pipeline/grid-file';
import { finiteRange, paintCoverage, paintRaster } from '@/lib/viewer/color-scale';
import { mapKindInfo } from '@/lib/viewer/map-kinds';
import type { ViewerScene } from './pixi-scene';
import type { WhatIfState } from './use-what-if';

type MapInfo = { name: string; kind: string; unit: string; url: string };
export type LoadedMap = { info: MapInfo; grid: GridMap };
export type ShownMap = { name: string; kind: string; unit: string; values: ArrayLike<number>; grid: GridMap['grid']; whatIf: boolean };

async function fetchGrid(info: MapInfo): Promise<LoadedMap> {
  const res = await fetch(info.url, { credentials: 'same-origin' });
  if (!res.ok) throw new Error(`map ${info.name}: HTTP ${res.status}`);
  return { info, grid: decodeGrid(new Uint8Array(await res.arrayBuffer())) };
}

/** The analysis's result maps, the shown one first, then the rest for the readout; and its coverage raster. */
export function useLoadedMaps(analysisId: string, base: string) {
  const [maps, setMaps] = useState<LoadedMap[]>([]);
  const results = useQuery({ queryKey: ['analysis', analysisId, 'viewer-maps'], queryFn: () => apiJson<{ maps: MapInfo[] }>(`${base}/results?limit=1`) });
  useEffect(() => {
    if (!results.data) return;
    let cancelled = false;
    const list = results.data.maps;
    const first = list.find((m) => m.name === 'risk') ?? list[0];
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
  return { maps, coverage, coverageGrid, allLoaded: maps.length > 0 && maps.length === (results.data?.maps.length ?? -1) };
}

/**
 * The maps as shown (what-if values in place of the stored depth and risk; the depth margin spread from the
 * openings), the selected one with its colour limits, painted into the scene's heat layer; the coverage raster too.
 */
export function useShownMaps(opts: { maps: LoadedMap[]; coverage: LoadedMap | undefined; whatIf: WhatIfState | null; storedMargin: Float32Array | null; ready: boolean; sceneRef: RefObject<ViewerScene | null>; opacity: number }) {
  const { maps, coverage, whatIf, storedMargin, ready, sceneRef, opacity } = opts;
  const [current, setCurrent] = useState<string>('risk');
  const [limits, setLimits] = useState<Record<string, [number, number]>>({});
  const shownMaps = useMemo(() => {
    const list: ShownMap[] = [];
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
  useEffect(() => sceneRef.current?.setHeatOpacity(opacity), [opacity, sceneRef]);

  useEffect(() => {
    const scene = sceneRef.current;
    if (!ready || !scene || !coverage) return;
    const g = coverage.grid.grid;
    scene.setCoverage({ rgba: paintCoverage(coverage.grid.values, g.nx, g.ny), nx: g.nx, ny: g.ny, x0Um: g.x0Um, y0Um: g.y0Um, pixelUm: g.pixelUm });
  }, [ready, coverage, sceneRef]);

  const setLimit = (lo: number, hi: number) => shown && Number.isFinite(lo) && Number.isFinite(hi) && setLimits((p) => ({ ...p, [shown.name]: [lo, hi] }));
  const resetLimit = () => shown && setLimits((p) => Object.fromEntries(Object.entries(p).filter(([k]) => k !== shown.name)));
  const nextMap = () => {
    const k = shownMaps.findIndex((m) => m.name === shown?.name);
    const next = shownMaps[(k + 1) % Math.max(1, shownMaps.length)];
    if (next) setCurrent(next.name);
  };
  return { shownMaps, shown, dataRange, kindInfo, lim, setCurrent, setLimit, resetLimit, nextMap };
}
