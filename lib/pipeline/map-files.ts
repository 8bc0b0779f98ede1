/** File names of result maps inside an analysis's output folder (shared by the worker, the CLI and the routes). */
import type { GridMap } from './grid-file';

/** "<kind>.trgrid"; window density "window-density-<W>um-<S>um.trgrid" (one per window set). */
export function mapFileName(map: Pick<GridMap, 'kind' | 'meta'>): string {
  if (map.kind === 'window-density') return `window-density-${String(map.meta.windowUm)}um-${String(map.meta.stepUm)}um.trgrid`;
  return `${map.kind}.trgrid`;
}
