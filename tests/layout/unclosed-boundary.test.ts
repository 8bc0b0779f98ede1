/**
 * A BOUNDARY whose last point differs from its first breaks the GDSII rule "first = last" (Calma GDSII Stream
 * Format Manual, release 6.0, XY record). Trenchant closes it implicitly and warns with the element's byte offset;
 * it never accepts it silently.
 */
import { execFile } from 'node:child_process';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { MAX_LAYOUT_WARNINGS } from '@/lib/layout/errors';
import { GdsiiWriter } from '@/lib/layout/gdsii-writer';
import { DataType, Rec } from '@/lib/layout/gdsii-records';
import { readLayoutBytes } from '@/lib/layout/read-bytes';
import { records, summedArea } from './helpers';

const root = fileURLToPath(new URL('../..', import.meta.url));

/** Raw BOUNDARY with exactly the given XY points (no closing point added). */
function rawBoundary(w: GdsiiWriter, layer: number, xy: number[]): GdsiiWriter {
  w.record(Rec.BOUNDARY, DataType.none);
  w.int16Record(Rec.LAYER, [layer]);
  w.int16Record(Rec.DATATYPE, [0]);
  w.int32Record(Rec.XY, xy);
  return w.record(Rec.ENDEL, DataType.none);
}

function layoutWith(unclosed: number): Uint8Array {
  const w = new GdsiiWriter().beginCell('TOP');
  w.rect(1, 0, 0, 0, 1000, 1000); // a proper, closed rectangle first
  for (let k = 0; k < unclosed; k++) rawBoundary(w, 1, [5000 + 3000 * k, 0, 7000 + 3000 * k, 0, 7000 + 3000 * k, 4000, 5000 + 3000 * k, 4000]);
  return w.endCell().finish();
}

/** Byte offsets of every BOUNDARY record. */
const boundaryOffsets = (bytes: Uint8Array) => records(bytes).filter(([, , type]) => type === Rec.BOUNDARY).map(([at]) => at);

describe('unclosed BOUNDARY', () => {
  it('is closed implicitly and reported with its byte offset', async () => {
    const bytes = layoutWith(1);
    const layout = await readLayoutBytes(bytes);
    const offsets = boundaryOffsets(bytes);
    expect(layout.warnings).toHaveLength(1);
    const w = layout.warnings![0]!;
    expect(w.code).toBe('unclosed-boundary');
    expect(w.offset).toBe(offsets[1]); // the second BOUNDARY is the unclosed one
    expect(w.message).toContain(`byte ${offsets[1]}`);
    // Closed implicitly: a 2 × 4 µm rectangle (8e6 dbu²) plus the 1 × 1 µm one, shoelace area by hand.
    expect(summedArea(layout, 1)).toBe(1e6 + 8e6);
    const set = layout.layers[0]!;
    expect(set.offsets[2]! - set.offsets[1]!).toBe(4);
  });

  it('a closed layout has no warnings', async () => {
    expect((await readLayoutBytes(layoutWith(0))).warnings).toEqual([]);
  });

  it('many unclosed boundaries keep a bounded list plus a count', async () => {
    const layout = await readLayoutBytes(layoutWith(MAX_LAYOUT_WARNINGS + 7));
    expect(layout.warnings).toHaveLength(MAX_LAYOUT_WARNINGS + 1);
    expect(layout.warnings!.at(-1)!.message).toMatch(/^7 more warnings/);
    expect(layout.layers[0]!.count).toBe(MAX_LAYOUT_WARNINGS + 8);
  });

  it('the CLI prints the warning on stderr and still answers', async () => {
    const bytes = layoutWith(1);
    const file = join(mkdtempSync(join(tmpdir(), 'trenchant-unclosed-')), 'open.gds');
    writeFileSync(file, bytes);
    const r = await new Promise<{ code: number; stdout: string; stderr: string }>((resolve) =>
      execFile(process.execPath, ['--import', 'tsx', 'lib/cli/main.ts', 'inspect', file, '--json'], { cwd: root }, (err, stdout, stderr) =>
        resolve({ code: err ? Number((err as { code?: number }).code ?? 1) : 0, stdout, stderr }),
      ),
    );
    expect(r.code).toBe(0);
    expect(r.stderr).toContain(`warning: ${file}: BOUNDARY element at byte ${boundaryOffsets(bytes)[1]} is not closed`);
    const j = JSON.parse(r.stdout) as { layers: { areaUm2: number }[]; warnings: { code: string; offset: number }[] };
    expect(j.layers[0]!.areaUm2).toBeCloseTo(9, 9);
    expect(j.warnings).toEqual([expect.objectContaining({ code: 'unclosed-boundary', offset: boundaryOffsets(bytes)[1] })]);
  });
});
