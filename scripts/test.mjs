// `npm test`: every vitest suite (unit, integration over HTTP, browser), then one plain closing line
// "N passed, N failed" so CI and people can see how many tests ran. Extra arguments go to vitest.
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';

const dir = mkdtempSync(path.join(tmpdir(), 'trenchant-test-'));
const report = path.join(dir, 'vitest.json');
const vitest = path.join('node_modules', 'vitest', 'vitest.mjs');
const run = spawnSync(
  process.execPath,
  [vitest, 'run', '--reporter=default', '--reporter=json', `--outputFile.json=${report}`, ...process.argv.slice(2)],
  { stdio: 'inherit', env: { ...process.env, NEXT_TELEMETRY_DISABLED: '1' } },
);

let passed = 0;
let failed = 0;
let skipped = 0;
try {
  const json = JSON.parse(readFileSync(report, 'utf8'));
  passed = json.numPassedTests ?? 0;
  skipped = (json.numPendingTests ?? 0) + (json.numTodoTests ?? 0);
  // A suite that fails to load has no failed tests of its own; count it so the line cannot read "0 failed".
  const brokenSuites = (json.testResults ?? []).filter(
    (r) => r.status === 'failed' && (r.assertionResults ?? []).every((a) => a.status !== 'failed'),
  ).length;
  failed = (json.numFailedTests ?? 0) + brokenSuites;
} catch {
  failed = Math.max(failed, 1);
}
rmSync(dir, { recursive: true, force: true });
console.log(`${passed} passed, ${failed} failed${skipped ? `, ${skipped} skipped` : ''}`);
process.exit(run.status === 0 && failed === 0 && passed > 0 ? 0 : 1);
