'use client';

import { useCallback, useEffect, useRef, useState } from 'react';
import { fitView, type View } from '@/lib/viewer/view-transform';
import type { ViewerScene } from './pixi-scene';

export const VIEWER_HEIGHT = 560;

/**
 * The pixi scene of one mounted viewer (built once, destroyed on unmount) and its view: applyView moves the scene
 * and the React state together; fit frames the die; the canvas follows the host's width.
 */
export function useViewerScene(dieBboxUm: [number, number, number, number] | null, onFailure: (why: string) => void) {
  const hostRef = useRef<HTMLDivElement>(null);
  const sceneRef = useRef<ViewerScene | null>(null);
  const viewRef = useRef<View | null>(null);
  const [ready, setReady] = useState(false);
  const [view, setViewState] = useState<View | null>(null);

  useEffect(() => {
    const host = hostRef.current;
    if (!host) return;
    let cancelled = false;
    let scene: ViewerScene | null = null;
    void import('./pixi-scene')
      .then(async ({ ViewerScene }) => {
        if (cancelled) return;
        scene = new ViewerScene();
        await scene.init(host, Math.max(200, host.clientWidth), VIEWER_HEIGHT);
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
  // Hook for the by-hand benchmark (bench/viewer.bench.ts) and browser tests only: ?bench=1 exposes the view and the scene.
  useEffect(() => {
    if (!ready || new URLSearchParams(window.location.search).get('bench') !== '1') return;
    (window as unknown as Record<string, unknown>).__trenchantViewer = { scene: sceneRef.current, applyView, view: () => viewRef.current };
  }, [ready, applyView]);

  const fit = useCallback(() => {
    const host = hostRef.current;
    if (host && dieBboxUm) applyView(fitView(dieBboxUm, Math.max(200, host.clientWidth), VIEWER_HEIGHT));
  }, [dieBboxUm, applyView]);

  useEffect(() => {
    if (ready && dieBboxUm && !viewRef.current) fit();
  }, [ready, dieBboxUm, fit]);

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

  return { hostRef, sceneRef, viewRef, ready, view, applyView, fit };
}
