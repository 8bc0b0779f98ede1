/** A TileSource module for the queue test: tile workers open it from { kind: 'module', url, exportName, args }. */
import { inMemoryTileSource, type TileSource } from '@/lib/layout/tile-source';
import type { FlatLayout } from '@/lib/layout/types';
import { makeSet, mulberry32, rect, type Ring } from '../geometry/make-set';

/** Seeded rectangles and L shapes on layer 5/0 over a 300 µm die (outline on 0/0). */
export function fixtureLayout(seed: number): FlatLayout {
  const rnd = mulberry32(seed);
  const a: Ring[] = [];
  for (let k = 0; k < 1500; k++) {
    const x = Math.floor(rnd() * 280_000) + 5000, y = Math.floor(rnd() * 280_000) + 5000;
    if (rnd() < 0.7) a.push(rect(x, y, x + 500 + Math.floor(rnd() * 3000), y + 500 + Math.floor(rnd() * 12_000)));
    else a.push([x, y, x + 8000, y, x + 8000, y + 2000, x + 2000, y + 2000, x + 2000, y + 10_000, x, y + 10_000]);
  }
  const die = makeSet([rect(0, 0, 300_000, 300_000)], 0, 0);
  return { format: 'csv', libraryName: 'queue-fixture', dbuUm: 0.001, userUnitUm: 1, topCell: '', cellCount: 0, labels: [], layers: [die, makeSet(a, 5, 0)], bboxDbu: [0, 0, 300_000, 300_000] };
}

export function openFixtureSource(args: { seed: number }): TileSource {
  return inMemoryTileSource(fixtureLayout(args.seed));
}

/** A source whose thread stops the moment it is opened (exit code 7): a tile thread that dies, for the pool tests. */
export function openDyingSource(): TileSource {
  process.exit(7);
}
