/** The most recently used polygon readers per layout revision (layout-windows.ts); evicted readers are closed. */
import { wholeReadLimitBytes } from '@/lib/layout/whole-read-limit';
import { openWindowReader, type WindowReader } from './layout-windows';

export type ReaderKey = { revisionId: string; path: string; topCell: string | null; wholeReadBytes?: number | undefined };

export function readerCache(size: number): { get(k: ReaderKey): Promise<WindowReader> } {
  const cache = new Map<string, Promise<WindowReader>>();
  return {
    get(k) {
      const hit = cache.get(k.revisionId);
      if (hit) {
        cache.delete(k.revisionId);
        cache.set(k.revisionId, hit);
        return hit;
      }
      const p = openWindowReader(k.path, k.topCell, k.wholeReadBytes ?? wholeReadLimitBytes());
      p.catch(() => cache.delete(k.revisionId));
      cache.set(k.revisionId, p);
      while (cache.size > size) {
        const oldest = cache.keys().next().value as string;
        void cache.get(oldest)?.then((r) => r.close(), () => undefined);
        cache.delete(oldest);
      }
      return p;
    },
  };
}
