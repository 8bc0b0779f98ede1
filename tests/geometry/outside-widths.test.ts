/**
 * Opening widths with closed-form answers (tests/fixtures/verify/make_widths.py writes widths.csv and the expected
 * values; plane geometry, common practice, no source — each derivation is beside its shape there): rectangles, an L
 * (corner disk r = t1 + t2 − √(2·t1·t2)), a T (junction disk (a² + b²/4)/a), circles as 32/64/200-gons, rotated
 * squares and rectangles, a right triangle (inradius (a + b − c)/2). Every other ring is clockwise. Run through the
 * command line (`features --json`) on the polygon CSV, as a user would.
 */
import { execFile } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { promisify } from 'node:util';
import { expect, it } from 'vitest';

const dir = fileURLToPath(new URL('../fixtures/verify/', import.meta.url));
const root = fileURLToPath(new URL('../../', import.meta.url));
const want = JSON.parse(readFileSync(`${dir}widths_expected.json`, 'utf8')) as {
  shapes: { name: string; minWidthUm: number; maxWidthUm: number; tolUm: number; why: string; bboxNm: number[] }[];
};

it('features --json: min and max width of each closed-form shape', async () => {
  const { stdout } = await promisify(execFile)(process.execPath, ['scripts/cli.mjs', 'features', `${dir}widths.csv`, '--layer', '1/0', '--json'], { cwd: root, timeout: 60_000 });
  const got = (JSON.parse(stdout) as { features: { bboxUm: number[]; minWidthUm: number; maxWidthUm: number }[] }).features;
  expect(got).toHaveLength(want.shapes.length);
  for (const s of want.shapes) {
    const f = got.find((g) => Math.abs((g.bboxUm[0] as number) - (s.bboxNm[0] as number) / 1000) < 0.01 && Math.abs((g.bboxUm[1] as number) - (s.bboxNm[1] as number) / 1000) < 0.01);
    // Tolerance: 1.5 nm where vertices were rounded to the 1 nm grid (rotated shapes: each edge moves ≤ 0.71 nm),
    // 3 nm for polygonised circles (README: within 2√2 grid steps of the drawn diameter).
    expect(Math.abs((f?.minWidthUm ?? NaN) - s.minWidthUm), `${s.name} min width (${s.why})`).toBeLessThanOrEqual(s.tolUm);
    expect(Math.abs((f?.maxWidthUm ?? NaN) - s.maxWidthUm), `${s.name} max width (${s.why})`).toBeLessThanOrEqual(s.tolUm);
  }
}, 60_000);
