/**
 * `npm run samples`: writes Trenchant's invented demo layouts into samples/ (all geometry made up for demos):
 * - mems-die.gds: a 6 × 6 mm MEMS die on one deep-etch layer (1/0): comb-drive trenches of 2, 5, 10 and 20 µm,
 *   an 8 × 8 array of 20 µm round vent holes, a 1.5 × 1.5 mm open cavity, and a die outline on 100/0.
 * - tsv-test-chip.gds: a 5 × 5 mm through-silicon-via test chip (layer 2/0): via fields of 5, 8 and 10 µm
 *   diameter at several pitches, a rotated field, and isolation-ring trenches.
 * - mems-die-excerpt.csv: a few openings in the trenchant-polygons v1 CSV format.
 * Units: 1 dbu = 1 nm, user unit 1 µm.
 */
import { writeFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { GdsiiWriter } from '../lib/layout/gdsii-writer';

const out = fileURLToPath(new URL('.', import.meta.url));
const um = (v: number) => Math.round(v * 1000);

function circle(cx: number, cy: number, r: number, n = 48): number[] {
  const pts: number[] = [];
  for (let k = 0; k < n; k++) pts.push(um(cx + r * Math.cos((2 * Math.PI * k) / n)), um(cy + r * Math.sin((2 * Math.PI * k) / n)));
  return pts;
}

function memsDie(): Uint8Array {
  const w = new GdsiiWriter({ libraryName: 'ORCHARD_MEMS_DEMO' });
  w.beginCell('MEMS_DIE')
    .rect(100, 0, 0, 0, um(6000), um(6000))
    .rect(1, 0, um(3800), um(3800), um(5300), um(5300)) // open cavity
    .aref('VENT', 8, 8, [um(600), um(4200)], [um(600 + 8 * 150), um(4200)], [um(600), um(4200 + 8 * 150)])
    .text(1, 0, um(4550), um(4550), 'CAVITY');
  [2, 5, 10, 20].forEach((width, i) => w.sref(`COMB_W${width}`, um(600 + i * 1300), um(600)));
  w.sref('SPRING', um(3000), um(3000), { angleDeg: 90 });
  w.endCell();
  w.beginCell('VENT').boundary(1, 0, circle(0, 0, 10)).endCell();
  for (const width of [2, 5, 10, 20]) {
    w.beginCell(`COMB_W${width}`);
    // 24 fingers of length 800 µm, gap = width, on a shared spine.
    w.aref('FINGER_W' + width, 24, 1, [0, 0], [um(24 * 2 * width), 0], [0, um(800)]);
    w.rect(1, 0, 0, um(800), um(48 * width), um(800 + 3 * width));
    w.endCell();
    w.beginCell('FINGER_W' + width).rect(1, 0, 0, 0, um(width), um(800)).endCell();
  }
  w.beginCell('SPRING').path(1, 0, [0, 0, um(400), 0, um(400), um(60), 0, um(60), 0, um(120), um(400), um(120)].map((v) => v), um(4), { pathtype: 2 }).endCell();
  return w.finish();
}

function tsvChip(): Uint8Array {
  const w = new GdsiiWriter({ libraryName: 'KESTREL_TSV_DEMO' });
  w.beginCell('TSV_TEST_CHIP').rect(100, 0, 0, 0, um(5000), um(5000));
  const fields: [number, number, number, number][] = [ // diameter, pitch, x, y (µm)
    [5, 20, 300, 300], [5, 10, 1500, 300], [8, 25, 300, 1800], [8, 16, 1500, 1800], [10, 40, 300, 3300], [10, 20, 1500, 3300],
  ];
  for (const [d, pitch, x, y] of fields) {
    const n = Math.floor(1000 / pitch);
    w.aref(`TSV_D${d}`, n, n, [um(x), um(y)], [um(x + n * pitch), um(y)], [um(x), um(y + n * pitch)]);
    w.text(2, 0, um(x), um(y - 50), `D${d}_P${pitch}`);
  }
  w.aref('TSV_D10', 20, 20, [um(3500), um(1500)], [um(3500 + 20 * 30), um(1500)], [um(3500), um(1500 + 20 * 30)], { angleDeg: 45 });
  // Isolation-ring trenches: 3 µm wide square rings around a 200 µm pad.
  for (let k = 0; k < 4; k++) w.path(2, 0, [um(3200 + k * 400), um(4300), um(3400 + k * 400), um(4300), um(3400 + k * 400), um(4500), um(3200 + k * 400), um(4500), um(3200 + k * 400), um(4300)], um(3));
  w.endCell();
  for (const d of [5, 8, 10]) w.beginCell(`TSV_D${d}`).boundary(2, 0, circle(0, 0, d / 2, 32)).endCell();
  return w.finish();
}

function csvExcerpt(): string {
  const rows = ['# trenchant-polygons v1', '# unit=um dbu=0.001 name=mems-die-excerpt', 'layer,datatype,polygon,x,y'];
  const rect = (id: string, x0: number, y0: number, x1: number, y1: number) =>
    [[x0, y0], [x1, y0], [x1, y1], [x0, y1]].forEach(([x, y]) => rows.push(`1,0,${id},${x},${y}`));
  [2, 5, 10, 20].forEach((wd, i) => rect(`trench-${wd}um`, i * 100, 0, i * 100 + wd, 400));
  rect('cavity', 500, 0, 900, 400);
  for (let k = 0; k < 16; k++) rows.push(`1,0,vent-1,${(1000 + 10 * Math.cos((2 * Math.PI * k) / 16)).toFixed(3)},${(200 + 10 * Math.sin((2 * Math.PI * k) / 16)).toFixed(3)}`);
  return rows.join('\n') + '\n';
}

writeFileSync(`${out}mems-die.gds`, memsDie());
writeFileSync(`${out}tsv-test-chip.gds`, tsvChip());
writeFileSync(`${out}mems-die-excerpt.csv`, csvExcerpt());
console.log('wrote samples/mems-die.gds, samples/tsv-test-chip.gds, samples/mems-die-excerpt.csv');
