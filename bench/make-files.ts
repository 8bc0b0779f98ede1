/**
 * Writes the benchmark layouts to a folder (default: a new temp folder) for timing the CLI by hand:
 *   hier.gds  — 1 M squares as a 4-block die of 500×500 AREFs (hierarchical)
 *   flat.gds  — the same 1 M squares written flat
 *   mixed.gds — bench/geometry-layout.ts's seeded 10 mm etch layer (1 M mixed openings, overlaps) plus a die outline
 * Usage: npx tsx bench/make-files.ts [DIR]   (prints DIR)
 */
import { mkdirSync, mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { pathToFileURL } from 'node:url';
import { GdsiiWriter } from '../lib/layout/gdsii-writer';
import { benchLayout } from './geometry-layout';

const N = 1000;

export function hierarchicalSquares(): Uint8Array {
  const w = new GdsiiWriter({ libraryName: 'BENCH_H' });
  w.beginCell('DIE');
  for (const [bx, by] of [[0, 0], [6_000_000, 0], [0, 6_000_000], [6_000_000, 6_000_000]] as const) w.sref('BLOCK', bx, by);
  w.endCell();
  w.beginCell('BLOCK').aref('VIA', N / 2, N / 2, [0, 0], [(N / 2) * 10_000, 0], [0, (N / 2) * 10_000]).endCell();
  w.beginCell('VIA').rect(1, 0, 0, 0, 5000, 5000).endCell();
  return w.finish();
}

export function flatSquares(): Uint8Array {
  const w = new GdsiiWriter({ libraryName: 'BENCH_F' });
  w.beginCell('FLAT');
  for (let j = 0; j < N; j++) for (let i = 0; i < N; i++) w.rect(1, 0, i * 10_000, j * 10_000, i * 10_000 + 5000, j * 10_000 + 5000);
  return w.endCell().finish();
}

/** `n` squares (5 µm at a 10 µm pitch, a square die) written flat: 64 bytes per square (the large-layout bench). */
export function flatSquaresN(n: number): Uint8Array {
  const w = new GdsiiWriter({ libraryName: 'BENCH_FN' });
  const row = Math.ceil(Math.sqrt(n));
  w.beginCell('FLAT');
  for (let k = 0; k < n; k++) {
    const i = k % row, j = Math.floor(k / row);
    w.rect(1, 0, i * 10_000, j * 10_000, i * 10_000 + 5000, j * 10_000 + 5000);
  }
  return w.endCell().finish();
}

export function mixedLayer(): Uint8Array {
  const set = benchLayout();
  const w = new GdsiiWriter({ libraryName: 'BENCH1M', dbuUm: 0.001 });
  w.beginCell('TOP');
  w.rect(0, 0, 0, 0, 10_000_000, 10_000_000);
  for (let p = 0; p < set.count; p++) {
    const a = set.offsets[p] as number;
    const b = set.offsets[p + 1] as number;
    w.boundary(set.layer, set.datatype, set.coords.subarray(2 * a, 2 * b));
  }
  return w.endCell().finish();
}

if (import.meta.url === pathToFileURL(process.argv[1] ?? '').href) {
  const dir = process.argv[2] ?? mkdtempSync(join(tmpdir(), 'trenchant-bench-'));
  mkdirSync(dir, { recursive: true });
  writeFileSync(join(dir, 'hier.gds'), hierarchicalSquares());
  writeFileSync(join(dir, 'flat.gds'), flatSquares());
  writeFileSync(join(dir, 'mixed.gds'), mixedLayer());
  console.log(dir);
}
