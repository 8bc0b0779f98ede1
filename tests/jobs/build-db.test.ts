/**
 * `next build` (run by the test server helper and `npm start` through scripts/build-if-stale.mjs) prerenders pages
 * that create the session store, and with it the database, before they reach cookies(); in a fresh clone that
 * left ./data/trenchant.db behind. The build now gets a throwaway database (buildEnv). Here the same first step of
 * a prerender runs in a child process whose working folder stands in for a fresh clone: with the build's
 * environment no data/ folder appears; without it (the control) one does.
 */
import { spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, describe, expect, it } from 'vitest';
import { buildEnv } from '../../scripts/build-if-stale.mjs';

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..', '..');
const fixture = path.join(root, 'tests', 'jobs', 'fixtures', 'open-session-db.ts');
const clones: string[] = [];
afterAll(() => clones.forEach((d) => rmSync(d, { recursive: true, force: true })));

function prerenderStep(env: NodeJS.ProcessEnv): { cwd: string; dbPath: string } {
  const cwd = mkdtempSync(path.join(tmpdir(), 'trenchant-clone-'));
  clones.push(cwd);
  const run = spawnSync(process.execPath, ['--import', path.join(root, 'node_modules', 'tsx', 'dist', 'esm', 'index.mjs'), fixture], {
    cwd,
    encoding: 'utf8',
    env: { ...env, TSX_TSCONFIG_PATH: path.join(root, 'tsconfig.json'), TRENCHANT_MIGRATIONS: path.join(root, 'drizzle') },
  });
  if (run.status !== 0) throw new Error(`fixture failed: ${run.stderr}`);
  return { cwd, dbPath: run.stdout.trim() };
}

describe('the build step and the default database', () => {
  it('control: without the build environment the default ./data/trenchant.db is created', () => {
    const env = { ...process.env };
    delete env.TRENCHANT_DB;
    const { cwd, dbPath } = prerenderStep(env);
    expect(dbPath).toBe(path.join(cwd, 'data', 'trenchant.db'));
    expect(existsSync(path.join(cwd, 'data'))).toBe(true);
  });

  it('with the build environment no data/ folder is created and the database is temporary', () => {
    const base = { ...process.env };
    delete base.TRENCHANT_DB;
    const { env, cleanup } = buildEnv(base);
    try {
      const { cwd, dbPath } = prerenderStep(env);
      expect(existsSync(path.join(cwd, 'data'))).toBe(false);
      expect(dbPath.startsWith(tmpdir())).toBe(true);
      expect(existsSync(dbPath)).toBe(true);
    } finally {
      cleanup();
    }
    expect(existsSync(path.dirname(env.TRENCHANT_DB as string))).toBe(false);
  });

  it('keeps a database the caller chose', () => {
    expect(buildEnv({ TRENCHANT_DB: '/somewhere/else.db' }).env.TRENCHANT_DB).toBe('/somewhere/else.db');
  });
});
