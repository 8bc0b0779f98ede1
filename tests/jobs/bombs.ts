/** Hostile but well-formed layouts for the upload-limit tests (invented geometry). */
import { GdsiiWriter } from '@/lib/layout/gdsii-writer';

/**
 * One 1 µm square placed by a single 4999 × 4999 AREF: ≈ 25 M flattened polygons from a file of a few hundred
 * bytes (the shape of the report in issue 15).
 */
export function arefBombGds(n = 4999): Uint8Array {
  const w = new GdsiiWriter({ libraryName: 'BOMB', dbuUm: 0.001 });
  w.beginCell('SQ');
  w.rect(1, 0, 0, 0, 1000, 1000);
  w.endCell();
  w.beginCell('TOP');
  w.aref('SQ', n, n, [0, 0], [n * 2000, 0], [0, n * 2000]);
  w.endCell();
  return w.finish();
}

/** Polygon CSV of `count` unit squares on layer 1/0 (4 vertex rows each). */
export function squaresCsv(count: number): string {
  const rows = ['# trenchant-polygons v1', 'layer,datatype,polygon,x,y'];
  for (let k = 0; k < count; k++) {
    const x = (k % 1000) * 2;
    const y = Math.floor(k / 1000) * 2;
    rows.push(`1,0,p${k},${x},${y}`, `1,0,p${k},${x + 1},${y}`, `1,0,p${k},${x + 1},${y + 1}`, `1,0,p${k},${x},${y + 1}`);
  }
  return `${rows.join('\n')}\n`;
}
