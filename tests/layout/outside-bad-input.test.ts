/**
 * Broken layouts written by the fixtures' own GDSII writer (tests/fixtures/verify/make_bad.py): truncated files,
 * wrong record lengths, XY payloads that are not whole points, too few points, an unknown PATHTYPE, MAG 0, a missing
 * cell, 10⁹ and 10²⁴ flattened instances, random bytes, an empty file, and polygon CSVs with a missing column, NaN,
 * Infinity, a short row, two vertices, a split polygon, an off-grid coordinate and no first line. The expected byte
 * offset of each fault is computed by the generator from the bytes it wrote. Every one must fail fast with a message
 * naming the fault and its byte offset or line; the command line exits 2 with one line on stderr (README).
 * Also: a valid polygon spanning the GDSII int32 extremes keeps its area (hand computation below).
 */
import { execFile } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { promisify } from 'node:util';
import { describe, expect, it } from 'vitest';
import { readLayoutFile } from '@/lib/layout/read';
import { inspectReport } from '@/lib/cli/inspect';

const dir = fileURLToPath(new URL('../fixtures/verify/', import.meta.url));
const root = fileURLToPath(new URL('../../', import.meta.url));
const cases = JSON.parse(readFileSync(`${dir}bad/cases.json`, 'utf8')) as Record<string, { offset?: number | null; line?: number; word: string }>;

async function failure(file: string): Promise<string> {
  try {
    await readLayoutFile(`${dir}bad/${file}`);
  } catch (err) {
    return err instanceof Error ? err.message : String(err);
  }
  return 'read without an error';
}

describe('bad input: clear errors with byte offset or line', () => {
  for (const [file, want] of Object.entries(cases)) {
    it(file, async () => {
      const t0 = Date.now();
      const msg = await failure(file);
      expect(Date.now() - t0, 'fails fast (no hang, no flattening of a huge count)').toBeLessThan(10_000);
      expect(msg).toContain(want.word);
      if (typeof want.offset === 'number') expect(msg).toMatch(new RegExp(`byte ${want.offset}\\b`));
      if (want.line !== undefined && want.line > 1) expect(msg).toContain(`line ${want.line}`);
    });
  }
  it('the command line exits 2 with one line naming the file', async () => {
    for (const file of ['truncated_in_xy.gds', 'nested_arefs.gds', 'nan_coordinate.csv']) {
      const err = await promisify(execFile)(process.execPath, ['scripts/cli.mjs', 'inspect', `${dir}bad/${file}`], { cwd: root, timeout: 60_000 }).then(
        () => null,
        (e: { code?: number; stderr?: string }) => e,
      );
      expect(err?.code, file).toBe(2); // README: exit code 2 on bad input
      const lines = (err?.stderr ?? '').trim().split('\n');
      expect(lines, file).toHaveLength(1);
      expect(lines[0]).toContain(file);
    }
  }, 60_000);
});

it('a triangle across the int32 extremes keeps its area (clipper-lib alone returned an empty union)', async () => {
  const r = inspectReport(await readLayoutFile(`${dir}int32_triangle.gds`));
  // Hand: vertices (2³¹ − 1, 0), (−2³¹, 0), (0, 2³¹ − 1) dbu of 1 nm: area = ½ · (2³² − 1) · (2³¹ − 1) nm²
  // = ½ · 4 294 967 295 · 2 147 483 647 = 4.611686015206162e18 nm² = 4.611686015206162e12 µm².
  const want = (0.5 * (2 ** 32 - 1) * (2 ** 31 - 1)) / 1e6;
  expect(Math.abs((r.layers[0]?.areaUm2 ?? 0) / want - 1)).toBeLessThan(1e-9);
});
