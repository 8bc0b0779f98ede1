/**
 * The check command end to end: spawns `npx tsx lib/cli/main.ts check …` on a GDSII file written with the
 * project's GdsiiWriter (three trenches, 2/5/20 µm, under the invented test model) and checks the exit codes:
 * 0 no error-severity flag, 1 error flags, 2 bad input with one line naming the problem.
 */
import { spawnSync } from 'node:child_process';
import { mkdtemp, readdir, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { readGridFile } from '@/lib/pipeline/grid-file-node';
import { TEST_MODEL_JSON, trenchGdsii } from './fixtures';

let dir = '';
let gds = '';
let wideOnly = '';
let model = '';

function check(...args: string[]) {
  const r = spawnSync('npx', ['tsx', 'lib/cli/main.ts', 'check', ...args], { cwd: process.cwd(), encoding: 'utf8', timeout: 60_000 });
  return { code: r.status, out: r.stdout, err: r.stderr };
}

beforeAll(async () => {
  dir = await mkdtemp(join(tmpdir(), 'trenchant-check-'));
  gds = join(dir, 'trenches.gds');
  wideOnly = join(dir, 'wide.gds');
  model = join(dir, 'model.json');
  await writeFile(gds, trenchGdsii());
  await writeFile(wideOnly, trenchGdsii([[600, 300, 620, 700]]));
  await writeFile(model, JSON.stringify(TEST_MODEL_JSON));
});
afterAll(async () => {
  if (dir) await rm(dir, { recursive: true, force: true });
});

describe('check command exit codes', () => {
  it('exit 1 and a human table when narrow trenches fall short of the target', () => {
    const r = check(gds, '--layer', '5/0', '--model', model);
    expect(r.code).toBe(1);
    expect(r.out).toMatch(/^ERROR +under-target-depth +opening #1 at \(201, 500\) µm/m);
    expect(r.out).toMatch(/^Caution: /m);
    expect(r.err).toBe('');
  });

  it('exit 0 with --json when the only opening is wide enough; one JSON object on stdout', () => {
    const r = check(wideOnly, '--layer', '5/0', '--model', model, '--json');
    expect(r.code).toBe(0);
    const out = JSON.parse(r.out) as { ok: boolean; exitCode: number; summary: { features: { count: number }; flags: { bySeverity: { error: number } } }; flags: unknown[] };
    expect(out.ok).toBe(true);
    expect(out.exitCode).toBe(0);
    expect(out.summary.features.count).toBe(1);
    expect(out.summary.flags.bySeverity.error).toBe(0);
  });

  it('window options and --out-dir: maps written as readable TRGRID1 files', async () => {
    const outDir = join(dir, 'maps');
    const r = check(gds, '--layer', '5/0', '--model', model, '--window-um', '200', '--step-um', '100', '--out-dir', outDir, '--json');
    expect(r.code).toBe(1);
    const files = (await readdir(outDir)).sort();
    expect(files).toContain('window-density-200um-100um.trgrid');
    expect(files).toHaveLength(7);
    const wd = await readGridFile(join(outDir, 'window-density-200um-100um.trgrid'));
    expect(wd.grid.pixelUm).toBe(100);
  });

  it('exit 2 for an unknown layer, listing the layers present', () => {
    const r = check(gds, '--layer', '9/0', '--model', model);
    expect(r.code).toBe(2);
    expect(r.err.trim()).toBe(`trenchant check: ${gds}: layer 9/0 is not in the layout; layers present: 0/0, 5/0`);
    expect(r.out).toBe('');
  });

  it('exit 2 for an unreadable layout, naming the file', async () => {
    const bad = join(dir, 'bad.gds');
    await writeFile(bad, 'not a layout');
    const r = check(bad, '--layer', '5/0', '--model', model);
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/^trenchant check: .*bad\.gds: not a GDSII stream file/);
    expect(r.err.trim().split('\n')).toHaveLength(1);
  });

  it('exit 2 for a model failing validation, listing its field errors (also as JSON with --json)', async () => {
    const badModel = join(dir, 'bad-model.json');
    await writeFile(badModel, JSON.stringify({ ...TEST_MODEL_JSON, openRateUmPerMin: -1, etch: { ...TEST_MODEL_JSON.etch, toleranceUm: 'x' } }));
    const r = check(gds, '--layer', '5/0', '--model', badModel, '--json');
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/invalid process model: .*openRateUmPerMin: .*etch\.toleranceUm: /);
    const out = JSON.parse(r.out) as { ok: boolean; error: { code: string; issues: { path: string }[] } };
    expect(out.ok).toBe(false);
    expect(out.error.code).toBe('bad-model');
    expect(out.error.issues.map((i) => i.path).sort()).toEqual(['etch.toleranceUm', 'openRateUmPerMin']);
  });

  it('exit 2 for bad usage (missing --model, unpaired --window-um)', () => {
    expect(check(gds, '--layer', '5/0').code).toBe(2);
    const r = check(gds, '--layer', '5/0', '--model', model, '--window-um', '100');
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/--window-um and --step-um come in pairs/);
  });
});
