/**
 * The `inspect` command as users run it: `npm run --silent cli -- inspect FILE [--json]` (tsx lib/cli/main.ts).
 * Expected numbers come from gdspy (tests/fixtures/gds/expected.json) and the exit-code contract.
 */
import { execFile } from 'node:child_process';
import { readFileSync, writeFileSync, mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';

const root = fileURLToPath(new URL('../../', import.meta.url));
const fixtures = join(root, 'tests/fixtures/gds');

function cli(args: string[]): Promise<{ code: number; stdout: string; stderr: string }> {
  return new Promise((resolve) => {
    execFile(join(root, 'node_modules/.bin/tsx'), ['lib/cli/main.ts', ...args], { cwd: root }, (err, stdout, stderr) => {
      resolve({ code: err ? Number((err as { code?: number }).code ?? 1) : 0, stdout, stderr });
    });
  });
}

describe('inspect command', () => {
  it('--json prints one object matching gdspy for holes_overlaps.gds', async () => {
    const r = await cli(['inspect', join(fixtures, 'holes_overlaps.gds'), '--json']);
    expect(r.code).toBe(0);
    const got = JSON.parse(r.stdout) as { topCell: string; dbuUm: number; layers: { layer: number; polygons: number; areaUm2: number; bboxUm: number[] }[] };
    const want = (JSON.parse(readFileSync(join(fixtures, 'expected.json'), 'utf8')) as { fixtures: Record<string, { topCell: string; layers: { layer: number; polygons: number; areaUm2: number }[] }> }).fixtures['holes_overlaps.gds']!;
    expect(got.topCell).toBe(want.topCell); // gdspy top_level()
    expect(got.dbuUm).toBe(0.001);
    for (const w of want.layers) {
      const g = got.layers.find((l) => l.layer === w.layer)!;
      expect(g.polygons).toBe(w.polygons); // gdspy get_polygons count
      expect(Math.abs(g.areaUm2 - w.areaUm2) / w.areaUm2).toBeLessThanOrEqual(1e-6); // gdspy boolean('or').area()
    }
  });

  it('prints a table with units, top cell and one row per layer', async () => {
    const r = await cli(['inspect', join(fixtures, 'dbu_10nm_mm.gds')]);
    expect(r.code).toBe(0);
    expect(r.stdout).toMatch(/user unit\s+1000 µm/);
    expect(r.stdout).toMatch(/database\s+0\.01 µm per unit/);
    expect(r.stdout).toMatch(/top cell\s+MM_UNITS/);
    expect(r.stdout).toMatch(/^6\/0\s+100\s+2500\s/m);
  });

  it('exits 2 with one line and no stack trace on unreadable input', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'trenchant-inspect-'));
    const bad = join(dir, 'photo.gds');
    writeFileSync(bad, new Uint8Array([0xff, 0xd8, 0xff, 0xe0, 0, 16, 0x4a, 0x46, 0x49, 0x46, ...new Array(100).fill(1)]));
    for (const args of [['inspect', bad], ['inspect', join(dir, 'missing.gds')], ['inspect']]) {
      const r = await cli(args);
      expect(r.code).toBe(2);
      expect(r.stdout).toBe('');
      expect(r.stderr.trim().split('\n')).toHaveLength(1);
      expect(r.stderr).not.toMatch(/\bat .*\.ts:\d+/);
    }
  });
});
