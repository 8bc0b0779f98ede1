/**
 * The upload check of GDSII files above the whole-read size (lib/uploads/check-indexed.ts) against the whole-file
 * check (check-layout.ts) on the same files: same description (layers with polygon and point counts, top cell,
 * library, units, extent, warnings), same refusals over a team's limits, same message (code and byte offset) for
 * broken files. The whole-file reader is itself checked against gdspy (tests/layout/gdspy-fixtures.test.ts); here
 * the reference is that reader, and what is checked is that the indexed path changes nothing the user sees.
 */
import { mkdtempSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import fc from 'fast-check';
import { afterAll, describe, expect, it } from 'vitest';
import { isGdsiiHead, readsThroughIndex, wholeReadLimitBytes } from '@/lib/layout/whole-read-limit';
import { checkLayoutFile } from '@/lib/uploads/check-layout';
import { checkStoredLayout } from '@/lib/uploads/check-indexed';
import { arefBombGds } from '../jobs/bombs';
import { apply, mutation } from '../layout/mutations';
import { flatDie, hierarchicalDie } from '../layout/tile-fixtures';

const dir = mkdtempSync(join(tmpdir(), 'trenchant-upindex-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const LIMITS = { maxPolygons: 10_000_000, maxPoints: 50_000_000 };

describe('whole-read size setting', () => {
  it('reads TRENCHANT_WHOLE_READ_MB in MiB, default 256 MiB, and picks only GDSII above it', () => {
    expect(wholeReadLimitBytes({})).toBe(256 * 1024 * 1024);
    expect(wholeReadLimitBytes({ TRENCHANT_WHOLE_READ_MB: '0.5' })).toBe(512 * 1024);
    expect(wholeReadLimitBytes({ TRENCHANT_WHOLE_READ_MB: 'lots' })).toBe(256 * 1024 * 1024);
    expect(isGdsiiHead(Uint8Array.of(0, 6, 0, 2))).toBe(true);
    const csv = join(dir, 'a.csv');
    writeFileSync(csv, '# trenchant-polygons v1\n' + 'x'.repeat(5000));
    expect(readsThroughIndex(csv, 10)).toBe(false);
    expect(readsThroughIndex('samples/mems-die.gds', 10)).toBe(true);
    expect(readsThroughIndex('samples/mems-die.gds', 1e12)).toBe(false);
    expect(readsThroughIndex(join(dir, 'missing.gds'), 0)).toBe(false);
  });
});

describe('indexed upload check = whole-file upload check', () => {
  writeFileSync(join(dir, 'hier.gds'), hierarchicalDie());
  writeFileSync(join(dir, 'flat.gds'), flatDie(20_000));
  const files = [
    join(dir, 'hier.gds'), join(dir, 'flat.gds'),
    ...readdirSync('samples').filter((f) => f.endsWith('.gds')).map((f) => join('samples', f)),
    ...readdirSync('tests/fixtures/gds').filter((f) => f.endsWith('.gds')).map((f) => join('tests/fixtures/gds', f)),
  ];
  for (const f of files) {
    it(f.replace(dir, '<tmp>'), async () => {
      const whole = await checkLayoutFile(f, LIMITS);
      const indexed = await checkStoredLayout(f, LIMITS, 0);
      expect(indexed.via).toBe('index');
      const { via: _v, ...rest } = indexed;
      expect(whole.ok).toBe(true);
      expect(rest).toEqual(whole);
      expect((await checkStoredLayout(f, LIMITS, 1e12)).via).toBe('whole');
    });
  }

  it('refuses an AREF bomb over the polygon limit with the same message, from the counts alone', async () => {
    const f = join(dir, 'bomb.gds');
    writeFileSync(f, arefBombGds());
    const indexed = await checkStoredLayout(f, LIMITS, 0);
    const { via: _v, ...rest } = indexed;
    expect(rest).toEqual(await checkLayoutFile(f, LIMITS));
    expect(rest).toMatchObject({ ok: false, code: 'over-limit', limit: 'polygons', count: 4999 * 4999 });
  });

  it('refuses over the point limit like the whole check', async () => {
    const f = join(dir, 'hier.gds');
    const small = { maxPolygons: 10_000_000, maxPoints: 100 };
    const { via: _v, ...rest } = await checkStoredLayout(f, small, 0);
    expect(rest).toEqual(await checkLayoutFile(f, small));
    expect(rest).toMatchObject({ ok: false, code: 'over-limit', limit: 'points' });
  });

  it('names the same problem and byte offset for 150 broken files (fast-check, fixed seed)', async () => {
    const base = hierarchicalDie(5);
    let n = 0;
    const kinds = new Set<string>();
    await fc.assert(
      fc.asyncProperty(fc.array(mutation, { minLength: 1, maxLength: 3 }), async (muts) => {
        const f = join(dir, `mut-${n++ % 3}.gds`);
        const bytes = apply(base, muts);
        writeFileSync(f, bytes);
        const whole = await checkLayoutFile(f, LIMITS);
        const indexed = await checkStoredLayout(f, LIMITS, 0);
        // A mutation can break the HEADER: then neither path sees GDSII and both read whole.
        expect(indexed.via).toBe(isGdsiiHead(bytes) && bytes.length > 0 ? 'index' : 'whole');
        const { via: _v, ...rest } = indexed;
        expect(rest).toEqual(whole);
        kinds.add(whole.ok ? 'ok' : whole.message.replace(/ at byte.*| \(.*/, '').slice(0, 40));
      }),
      { seed: 20261204, numRuns: 150 },
    );
    expect(kinds.has('ok')).toBe(true);
    expect(kinds.size).toBeGreaterThanOrEqual(4);
  });
});
