'use client';

import { useEffect, useRef, type RefObject } from 'react';
import { panBy, zoomAbout, type View } from '@/lib/viewer/view-transform';

/**
 * Pointer, wheel and keyboard on the canvas host: drag pans, wheel and two-finger pinch zoom about the cursor,
 * arrows/+/−/F/0/M/Escape as listed in the host's aria-label. A press that does not move is a click; a move with
 * no button is a hover (`onHover` with screen px).
 */
export function useViewerInput(opts: {
  hostRef: RefObject<HTMLDivElement | null>;
  viewRef: RefObject<View | null>;
  applyView: (v: View) => void;
  fit: () => void;
  onHover: (sx: number, sy: number, v: View) => void;
  onClick: (sx: number, sy: number) => void;
  onEscape: () => void;
  onNextMap: () => void;
}) {
  const { hostRef, viewRef, applyView } = opts;
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
    opts.onHover(sx, sy, v);
  };
  const onPointerUp = (e: React.PointerEvent) => {
    touches.current.delete(e.pointerId);
    const d = drag.current;
    drag.current = null;
    if (!d || d.moved || !viewRef.current) return;
    const [sx, sy] = local(e);
    opts.onClick(sx, sy);
  };
  const onPointerCancel = (e: React.PointerEvent) => touches.current.delete(e.pointerId);
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
  }, [applyView, hostRef, viewRef]);
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
      f: opts.fit,
      '0': opts.fit,
      Escape: opts.onEscape,
      m: opts.onNextMap,
    };
    const act = keys[e.key];
    if (act) {
      e.preventDefault();
      act();
    }
  };
  return { onPointerDown, onPointerMove, onPointerUp, onPointerCancel, onKeyDown };
}
