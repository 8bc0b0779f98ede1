import { readFileSync } from 'node:fs';
import { GdsiiParser } from './lib/layout/gdsii-parser';
import { apply } from './tests/layout/mutations';
const b = apply(new Uint8Array(readFileSync('tests/fixtures/gds/arrays.gds')), [{"kind":"flip","at":659497926,"mask":68}]);
const at = 659497926 % b.length; console.log('flip at', at, b.length);
const p = new GdsiiParser(); p.push(b); const lib = p.finish();
for (const c of lib.cells) console.log(c.name, c.refs.map(r => [r.cols, r.rows, r.colDx, r.colDy, r.rowDx, r.rowDy, r.mag, r.angleDeg]), c.shapes.map(s => s.starts.length));
