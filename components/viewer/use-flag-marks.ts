'use client';

import { useQuery } from '@tanstack/react-query';
import { useEffect, useMemo, useState, type RefObject } from 'react';
import { useFindingSelection } from '@/components/analysis/finding-selection';
import type { Flag } from '@/lib/pipeline/flags';
import { decodeFlags, flagAt, selectAndAppend, type FlagColumns, type FlagRecord } from '@/lib/viewer/flag-wire';
import type { ViewerScene } from './pixi-scene';

/** Flag kinds the etch model does not touch: a what-if keeps the stored ones. */
const modelFree = (kind: string) => kind.startsWith('window-density') || kind.startsWith('density-gradient');

export type FlagSource = { stored: number } | { whatIf: number };

/**
 * Every flag of the analysis on the canvas: all of them from flags.bin (not the JSON API's first 5,000), or, during
 * a what-if, the stored density flags plus the what-if's opening flags. Pushes them into the scene, keeps the
 * scene's selection in step with the shared finding selection, and says where each shown flag came from so the
 * tooltip can fetch its message.
 */
export function useFlagMarks(opts: { base: string; analysisId: string; ready: boolean; sceneRef: RefObject<ViewerScene | null>; whatIfFlags: Flag[] | null; onFocus: (xUm: number, yUm: number, bboxUm: [number, number, number, number]) => void }) {
  const { base, analysisId, ready, sceneRef, whatIfFlags, onFocus } = opts;
  const { selected } = useFindingSelection();
  const [placed, setPlaced] = useState({ drawn: 0, inView: 0 });

  const stored = useQuery({
    queryKey: ['analysis', analysisId, 'viewer-flags-bin'],
    queryFn: async () => {
      const res = await fetch(`${base}/flags.bin`, { credentials: 'same-origin' });
      if (!res.ok) throw new Error(`flags: HTTP ${res.status}`);
      return decodeFlags(new Uint8Array(await res.arrayBuffer()));
    },
    staleTime: Infinity,
  });

  const shown = useMemo((): { flags: FlagColumns; source: (i: number) => FlagSource } | null => {
    const s = stored.data;
    if (!s) return null;
    if (!whatIfFlags) return { flags: s, source: (i) => ({ stored: i }) };
    const keep: number[] = [];
    for (let i = 0; i < s.count; i++) if (modelFree(s.kinds[s.kind[i]!] ?? '')) keep.push(i);
    const extra: FlagRecord[] = whatIfFlags.map((f) => ({ key: f.id, kind: f.kind, severity: f.severity, xUm: f.xUm, yUm: f.yUm, bboxUm: f.bboxUm, measured: f.measured, limit: f.limit, unit: f.unit }));
    return { flags: selectAndAppend(s, keep, extra), source: (i) => (i < keep.length ? { stored: keep[i]! } : { whatIf: i - keep.length }) };
  }, [stored.data, whatIfFlags]);

  // Key → index, built once per flag set (a million keys take ~100 ms; only selection from the table needs it).
  const keyIndex = useMemo(() => {
    const m = new Map<string, number>();
    if (shown) shown.flags.keys.forEach((k, i) => m.set(k, i));
    return m;
  }, [shown]);

  useEffect(() => {
    const scene = sceneRef.current;
    if (!ready || !scene) return;
    scene.onMarksPlaced = (drawn, inView) => setPlaced((p) => (p.drawn === drawn && p.inView === inView ? p : { drawn, inView }));
    scene.setFlags(shown?.flags ?? null);
  }, [ready, shown, sceneRef]);

  useEffect(() => {
    const scene = sceneRef.current;
    if (!ready || !scene) return;
    if (!selected) return scene.setSelected(null);
    scene.setSelected({ index: keyIndex.get(selected.flagId) ?? -1, xUm: selected.xUm, yUm: selected.yUm, bboxUm: selected.bboxUm });
    if (selected.source === 'table') onFocus(selected.xUm, selected.yUm, selected.bboxUm);
  }, [ready, selected, keyIndex, sceneRef, onFocus]);

  return {
    flags: shown?.flags ?? null,
    source: shown?.source ?? null,
    total: stored.data?.count ?? null,
    error: stored.error ? String(stored.error) : null,
    placed,
    recordAt: (i: number) => (shown ? flagAt(shown.flags, i) : null),
  };
}
