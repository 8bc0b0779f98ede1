/**
 * Review lists at scale: grouping (lib/review/group-findings.ts) and revision compare (lib/review/compare.ts) on
 * synthetic findings — openings on a 50 µm lattice, a third without a width (location-grouped), widths in four
 * classes; the later revision moves every fifth finding by 30 µm (beyond the 1 µm tolerance) and the rest by 0.3 µm.
 * Measurements only; timings swing with machine load, so the load average is printed.
 */
import { loadavg } from 'node:os';
import { compareFindings } from '@/lib/review/compare';
import { groupFindings, type GroupableFinding } from '@/lib/review/group-findings';

export default async function bench(): Promise<void> {
  console.log(`load average ${loadavg().map((v) => v.toFixed(2)).join(' ')}`);
  for (const n of [10_000, 100_000, 1_000_000]) {
    const fs: GroupableFinding[] = [];
    for (let i = 0; i < n; i++) {
      const x = (i % 1000) * 50;
      const y = Math.floor(i / 1000) * 50;
      const w = i % 3 === 0 ? null : ([5, 4.98, 10, 20][i % 4] as number);
      fs.push({ key: `k${i}`, kind: i % 2 ? 'under-target-depth' : 'width-below-minimum', cause: 'c', severity: 'error', bboxUm: [x, y, x + 5, y + 5], widthUm: w });
    }
    let t = performance.now();
    const groups = groupFindings(fs);
    const tGroup = performance.now() - t;
    const before = fs.map((f) => ({ key: f.key, kind: f.kind, xUm: f.bboxUm[0], yUm: f.bboxUm[1] }));
    const after = before.map((p, i) => ({ ...p, key: `m${i}`, xUm: p.xUm + (i % 5 === 0 ? 30 : 0.3) }));
    t = performance.now();
    const c = compareFindings(before, after, 1);
    const tCompare = performance.now() - t;
    console.log(
      `${n.toLocaleString('en')} findings: ${groups.length.toLocaleString('en')} groups in ${tGroup.toFixed(0)} ms; compare ${tCompare.toFixed(0)} ms ` +
        `(unchanged ${c.unchanged.length.toLocaleString('en')}, new ${c.added.length.toLocaleString('en')}, resolved ${c.resolved.length.toLocaleString('en')})`,
    );
    await new Promise((r) => setImmediate(r));
  }
}
