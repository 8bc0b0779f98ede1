/**
 * The invented demo layout for the seeded "Kestrel-3 gyroscope die" project: a 3 mm × 3 mm die whose deep
 * trench layer (1/0) holds comb-drive fingers (2–8 µm gaps), folded springs, a ring of wide release trenches and
 * two open fields next to the bond pads (layer 10/0, not etched). Widths and densities are chosen so the demo shows
 * lag in the narrow gaps and loading near the open fields. Built with hierarchy (cells + arrays) like a real GDSII.
 */
import { GdsiiWriter } from '@/lib/layout/gdsii-writer';

const UM = 1000; // dbu per µm (dbu = 1 nm)

export const DEMO_LAYOUT_FILE_NAME = 'kestrel3-drie.gds';
export const DEMO_ETCH_LAYER = { layer: 1, datatype: 0 } as const;

export function demoLayoutGdsii(): Uint8Array {
  const w = new GdsiiWriter({ libraryName: 'KESTREL3', dbuUm: 0.001 });

  // One comb finger gap: a trench of the given width, 120 µm long.
  for (const gap of [2, 3, 5, 8]) {
    w.beginCell(`GAP${gap}`);
    w.rect(1, 0, 0, 0, gap * UM, 120 * UM);
    w.endCell();
  }
  // Folded spring: a meander of 4 µm trenches.
  w.beginCell('SPRING');
  for (let k = 0; k < 6; k++) w.rect(1, 0, 0, k * 20 * UM, 200 * UM, (k * 20 + 4) * UM);
  w.rect(1, 0, 0, 0, 4 * UM, 104 * UM);
  w.rect(1, 0, 196 * UM, 0, 200 * UM, 104 * UM);
  w.endCell();
  // Comb bank: four arrays of gaps at different pitches.
  w.beginCell('COMB');
  const banks: [number, number][] = [
    [2, 8],
    [3, 10],
    [5, 14],
    [8, 20],
  ];
  banks.forEach(([gap, pitch], b) => {
    const cols = 24;
    w.aref(`GAP${gap}`, cols, 1, [b * 300 * UM, 0], [(b * 300 + cols * pitch) * UM, 0], [b * 300 * UM, 150 * UM]);
  });
  w.endCell();

  w.beginCell('KESTREL3_TOP');
  // Four comb quadrants around the proof mass.
  w.aref('COMB', 1, 4, [300 * UM, 400 * UM], [1500 * UM, 400 * UM], [300 * UM, 400 * UM + 4 * 450 * UM]);
  // Springs at the corners of the proof mass.
  for (const [x, y] of [[500, 2500], [2100, 2500], [500, 250], [2100, 250]] as const) w.sref('SPRING', x * UM, y * UM);
  // Release ring: 20 µm trenches around the structure.
  w.rect(1, 0, 200 * UM, 200 * UM, 2800 * UM, 220 * UM);
  w.rect(1, 0, 200 * UM, 2780 * UM, 2800 * UM, 2800 * UM);
  w.rect(1, 0, 200 * UM, 200 * UM, 220 * UM, 2800 * UM);
  w.rect(1, 0, 2780 * UM, 200 * UM, 2800 * UM, 2800 * UM);
  // Open fields by the bond pads (large exposed silicon: strong local loading).
  w.rect(1, 0, 2300 * UM, 700 * UM, 2700 * UM, 1300 * UM);
  w.rect(1, 0, 2300 * UM, 1600 * UM, 2700 * UM, 2200 * UM);
  // Isolation holes of a test row: 6 µm squares.
  for (let k = 0; k < 30; k++) w.rect(1, 0, (400 + k * 60) * UM, 2900 * UM, (406 + k * 60) * UM, 2906 * UM);
  // Bond pads (layer 10/0, metal; not part of the etch) and the die outline (layer 0/0).
  for (let k = 0; k < 8; k++) w.rect(10, 0, 2850 * UM, (300 + k * 300) * UM, 2950 * UM, (400 + k * 300) * UM);
  w.rect(0, 0, 0, 0, 3000 * UM, 3000 * UM);
  w.text(63, 0, 1500 * UM, 1500 * UM, 'KESTREL-3 DRIE');
  w.endCell();
  return w.finish();
}
