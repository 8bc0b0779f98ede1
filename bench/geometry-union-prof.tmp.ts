import { openRegions } from '../lib/geometry';
import { benchLayout } from './geometry-layout';
const set = benchLayout(600);
const c0 = process.cpuUsage();
const r = openRegions(set, 0.001, { regionDbu: [0, 0, 6e6, 6e6] });
const cu = process.cpuUsage(c0);
console.log('union cpu', (cu.user + cu.system) / 1e6, r.pieceCount);
