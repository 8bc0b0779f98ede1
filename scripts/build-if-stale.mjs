// Builds the Next app when .next is missing or older than any source file. Shared by `npm start` and the test
// server helper (tests/support/server.ts). A lock directory keeps concurrent callers from building twice.
import { spawnSync } from 'node:child_process';
import { createHash } from 'node:crypto';
import { existsSync, mkdirSync, mkdtempSync, readdirSync, rmSync, statSync, writeFileSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';

/** Paths (relative to the project root) whose changes require a rebuild. */
export const SOURCE_PATHS = [
  'app', 'components', 'lib', 'db', 'drizzle', 'proxy.ts', 'instrumentation.ts', 'next.config.mjs',
  'postcss.config.mjs', 'tsconfig.json', 'package.json', 'package-lock.json',
];

function newestMtime(p) {
  if (!existsSync(p)) return 0;
  const st = statSync(p);
  if (!st.isDirectory()) return st.mtimeMs;
  let newest = st.mtimeMs;
  for (const entry of readdirSync(p)) {
    if (entry === 'node_modules' || entry.startsWith('.')) continue;
    newest = Math.max(newest, newestMtime(path.join(p, entry)));
  }
  return newest;
}

/** Newest modification time (ms) over SOURCE_PATHS. */
export function newestSourceMtime(root) {
  return Math.max(...SOURCE_PATHS.map((rel) => newestMtime(path.join(root, rel))));
}

/** Why a build is needed, or null when .next/BUILD_ID is newer than every source. */
export function buildStaleReason(root) {
  const buildId = path.join(root, '.next', 'BUILD_ID');
  if (!existsSync(buildId)) return 'no production build yet';
  const built = statSync(buildId).mtimeMs;
  for (const rel of SOURCE_PATHS) {
    if (newestMtime(path.join(root, rel)) > built) return `${rel} changed since the last build`;
  }
  return null;
}

/**
 * Environment for `next build`. Prerendering renders pages that open the database before they reach cookies()
 * and bail out to dynamic rendering, which created ./data/trenchant.db in a fresh clone; unless the caller chose a
 * database, the build gets a throwaway one in a temporary folder (`cleanup` removes it).
 */
export function buildEnv(base = process.env) {
  const env = { ...base, NEXT_TELEMETRY_DISABLED: '1' };
  if (base.TRENCHANT_DB) return { env, cleanup: () => undefined };
  const dir = mkdtempSync(path.join(tmpdir(), 'trenchant-build-db-'));
  env.TRENCHANT_DB = path.join(dir, 'build.db');
  return { env, cleanup: () => rmSync(dir, { recursive: true, force: true }) };
}

function sleep(ms) {
  Atomics.wait(new Int32Array(new SharedArrayBuffer(4)), 0, 0, ms);
}

/**
 * Runs `next build` in `root` if needed. Returns { built: boolean, reason }. Throws with the build's last output
 * lines when the build fails. `log` receives progress lines. With `rememberFailure`, a failure of the same sources
 * in the last 15 minutes is reported again without rebuilding (for parallel test files).
 */
export function buildIfStale(root, { log = (l) => console.log(l), stdio = 'inherit', rememberFailure = false } = {}) {
  if (!buildStaleReason(root)) return { built: false, reason: null };
  const key = createHash('sha1').update(path.resolve(root)).digest('hex').slice(0, 12);
  const lock = path.join(tmpdir(), `trenchant-build-${key}.lock`);
  // A failed build is remembered for the same sources, so parallel test files report it once instead of each
  // spending a minute rebuilding the same broken tree.
  const failedMarker = path.join(tmpdir(), `trenchant-build-${key}.failed.json`);
  const failedBefore = () => {
    try {
      const f = JSON.parse(readFileSync(failedMarker, 'utf8'));
      return rememberFailure && f.sources === newestSourceMtime(root) && f.at > Date.now() - 15 * 60_000 ? f.message : null;
    } catch {
      return null;
    }
  };
  const deadline = Date.now() + 10 * 60_000;
  for (;;) {
    try {
      mkdirSync(lock);
      writeFileSync(path.join(lock, 'pid'), String(process.pid));
      break;
    } catch {
      // Someone else is building; a lock whose owner died is taken over.
      let owner = 0;
      try { owner = Number(readFileSync(path.join(lock, 'pid'), 'utf8')); } catch { /* not written yet */ }
      let alive = true;
      if (owner) { try { process.kill(owner, 0); } catch { alive = false; } }
      if (!alive) { rmSync(lock, { recursive: true, force: true }); continue; }
      if (Date.now() > deadline) throw new Error(`timed out waiting for another build (lock ${lock})`);
      sleep(500);
    }
  }
  try {
    const reason = buildStaleReason(root);
    if (!reason) return { built: false, reason: null };
    const previous = failedBefore();
    if (previous) throw new Error(`${previous}\n(the same sources failed to build before; change a file to retry)`);
    const sources = newestSourceMtime(root);
    log(`[trenchant] building the app (${reason}) ...`);
    const { env, cleanup } = buildEnv();
    let run;
    try {
      run = spawnSync(process.execPath, [path.join(root, 'node_modules', 'next', 'dist', 'bin', 'next'), 'build'], {
        cwd: root,
        stdio: stdio === 'inherit' ? 'inherit' : 'pipe',
        encoding: 'utf8',
        env,
        maxBuffer: 64 * 1024 * 1024,
      });
    } finally {
      cleanup();
    }
    if (run.status !== 0) {
      const tail = `${run.stdout ?? ''}\n${run.stderr ?? ''}`.trim().split('\n').slice(-40).join('\n');
      const message = `next build failed (exit ${run.status})${tail ? `:\n${tail}` : ''}`;
      writeFileSync(failedMarker, JSON.stringify({ sources, at: Date.now(), message }));
      throw new Error(message);
    }
    rmSync(failedMarker, { force: true });
    return { built: true, reason };
  } finally {
    rmSync(lock, { recursive: true, force: true });
  }
}
