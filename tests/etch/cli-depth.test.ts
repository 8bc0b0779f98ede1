import { writeFileSync, mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest';
import { run } from '@/lib/cli/depth';

let out: string[];
let err: string[];
beforeEach(() => {
  out = [];
  err = [];
  vi.spyOn(console, 'log').mockImplementation((...a: unknown[]) => void out.push(a.join(' ')));
  vi.spyOn(console, 'error').mockImplementation((...a: unknown[]) => void err.push(a.join(' ')));
});
afterEach(() => vi.restoreAllMocks());

const sample = (name: string) => new URL(`../../samples/models/${name}`, import.meta.url).pathname;

describe('cli depth', () => {
  it('--json prints one object with depthUm, aspectRatio, ardeFactor, timeToTargetMin', async () => {
    expect(await run(['--model', sample('deep-trench-continuous.json'), '--width-um', '5', '--density', '0.3', '--json'])).toBe(0);
    expect(out).toHaveLength(1);
    const j = JSON.parse(out[0] ?? '') as Record<string, unknown>;
    for (const k of ['depthUm', 'aspectRatio', 'ardeFactor', 'timeToTargetMin']) expect(j).toHaveProperty(k);
    expect(j.aspectRatio).toBeCloseTo((j.depthUm as number) / 5, 12);
    expect(j.kind).toBe('trench');
  });
  it('timeToTargetMin is null when the target is never reached', async () => {
    expect(await run(['--model', sample('deep-trench-continuous.json'), '--width-um', '1', '--kind', 'hole', '--json'])).toBe(0);
    expect((JSON.parse(out[0] ?? '') as { timeToTargetMin: unknown }).timeToTargetMin).toBeNull();
  });
  it('text output names depth, aspect ratio, ARDE factor, time to target and the caution', async () => {
    expect(await run(['--model', sample('cyclic-via.json'), '--width-um', '10', '--kind', 'hole'])).toBe(0);
    const text = out.join('\n');
    for (const re of [/depth at 20 min: /, /aspect ratio reached: /, /ARDE factor there: /, /time to target: /, /cycles in recipe: /, /process of record/]) expect(text).toMatch(re);
  });
  it('exits 2 with one line listing the field errors of a bad model', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'etch-cli-'));
    const file = join(dir, 'bad.json');
    writeFileSync(file, JSON.stringify({ openRateUmPerMin: -2, reactionProbability: 2, loading: { coefficient: 0, lengthUm: 10 }, etch: { timeMin: 1, targetDepthUm: 5, toleranceUm: 6, maxAspectRatio: 10 }, mode: 'continuous' }));
    expect(await run(['--model', file, '--width-um', '2'])).toBe(2);
    expect(err).toHaveLength(1);
    expect(err[0]).toMatch(/invalid process model: openRateUmPerMin: .*reactionProbability: /);
    expect(err[0]?.includes('\n')).toBe(false);
    writeFileSync(file, '{ not json');
    expect(await run(['--model', file, '--width-um', '2'])).toBe(2);
    expect(err[1]).toMatch(/not valid JSON/);
  });
  it('exits 2 on bad options', async () => {
    const m = sample('minimal-neutral-limited.json');
    expect(await run(['--model', m, '--width-um', 'wide'])).toBe(2);
    expect(await run(['--model', m, '--width-um', '-1'])).toBe(2);
    expect(await run(['--model', m, '--width-um', '2', '--kind', 'slot'])).toBe(2);
    expect(await run(['--model', m, '--width-um', '2', '--density', '2'])).toBe(2);
    expect(await run(['--width-um', '2'])).toBe(2);
    expect(await run(['--model', m, '--width-um', '2', '--colour', 'red'])).toBe(2);
    expect(await run(['--model', '/nonexistent/model.json', '--width-um', '2'])).toBe(2);
    expect(err).toHaveLength(7);
    expect(err.every((e) => e.startsWith('trenchant depth: ') && !e.includes('\n'))).toBe(true);
  });
});
