import { featuresFromRegions, openRegions } from '../lib/geometry';
import { benchLayout } from './geometry-layout';
const sites = Number(process.argv[2] ?? 300);
const set = benchLayout(sites);
const side = sites * 10000;
let t = performance.now();
const regions = openRegions(set, 0.001, { regionDbu: [0, 0, side, side] });
console.log('union', ((performance.now() - t) / 1000).toFixed(2), 's pieces', regions.pieceCount);
t = performance.now();
const c0 = process.cpuUsage();
const feats = featuresFromRegions(regions);
const cu = process.cpuUsage(c0);
console.log('features', ((performance.now() - t) / 1000).toFixed(2), 's cpu', ((cu.user + cu.system) / 1e6).toFixed(2), 'n', feats.length);
const kinds: Record<string, number> = {};
let exact = 0, lat = 0;
for (const f of feats) { kinds[f.kind] = (kinds[f.kind] ?? 0) + 1; if (f.widthExact) exact++; if (f.widthStepUm > 0) lat++; }
console.log(JSON.stringify(kinds), 'exact', exact, 'lattice', lat);
let h = 0; for (const f of feats) h = (h * 31 + Math.round(f.minWidthUm * 1e6) + 7 * Math.round(f.maxWidthUm * 1e6)) % 1000000007;
console.log('hash', h);
if (process.argv[3]) { const fs = await import('node:fs'); fs.writeFileSync(process.argv[3], JSON.stringify(feats.map(f => [f.bboxUm, f.minWidthUm, f.maxWidthUm, f.kind, f.widthExact, f.widthStepUm]))); }
