import { spawnSync } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';

const root = fileURLToPath(new URL('../..', import.meta.url));
const gds = fileURLToPath(new URL('../fixtures/geometry/density-ref.gds', import.meta.url));
const ref = JSON.parse(readFileSync(new URL('../fixtures/geometry/density-ref.json', import.meta.url), 'utf8')) as {
  windows: { windowUm: number; stepUm: number; nx: number; ny: number; values: number[][] }[];
};

function cli(...args: string[]) {
  const r = spawnSync(process.execPath, ['--import', 'tsx', 'lib/cli/main.ts', ...args], { cwd: root, encoding: 'utf8' });
  return { code: r.status, out: r.stdout, err: r.stderr };
}

describe('cli density / features on the gdspy-written fixture', () => {
  it('density --json agrees with gdspy window clipping to 1e-9', () => {
    const c = ref.windows[0]!;
    const r = cli('density', gds, '--layer', '1/0', '--window-um', String(c.windowUm), '--step-um', String(c.stepUm), '--json');
    expect(r.code).toBe(0);
    const j = JSON.parse(r.out) as { nx: number; ny: number; values: number[][]; method: Record<string, string>; originUm: number[] };
    expect([j.nx, j.ny]).toEqual([c.nx, c.ny]);
    let worst = 0;
    for (let y = 0; y < c.ny; y++) for (let x = 0; x < c.nx; x++) worst = Math.max(worst, Math.abs(j.values[y]![x]! - c.values[y]![x]!));
    expect(worst).toBeLessThan(1e-9); // Source: gdspy 1.4.2 boolean 'and' per window (tests/fixtures/geometry/generate.py)
    expect(Object.keys(j.method).sort()).toEqual(['denominator', 'edgePolicy', 'origin', 'polarity', 'raster']);
    expect(j.originUm).toEqual([2, 4]); // lower-left of the layout bbox (generate.py: first line at x = 2 µm, y = 4 µm)
  });

  it('features --json lists the eight 2 µm lines of the line/space block as trenches', () => {
    const r = cli('features', gds, '--layer', '1/0', '--json');
    expect(r.code).toBe(0);
    const j = JSON.parse(r.out) as { features: { kind: string; minWidthUm: number; areaUm2: number }[] };
    const lines = j.features.filter((f) => f.areaUm2 === 64);
    expect(lines).toHaveLength(8); // generate.py: 8 lines of 2 × 32 µm
    for (const f of lines) expect([f.kind, f.minWidthUm]).toEqual(['trench', 2]);
  });

  it('bad input exits 2 with one line naming the problem', () => {
    const r = cli('density', gds, '--layer', '7/0', '--window-um', '20', '--step-um', '10');
    expect(r.code).toBe(2);
    expect(r.err.trim().split('\n')).toHaveLength(1);
    expect(r.err).toMatch(/layer 7\/0 not found/);
    const r2 = cli('features', gds);
    expect(r2.code).toBe(2);
    expect(r2.err).toMatch(/missing --layer/);
  });
});
