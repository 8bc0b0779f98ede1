/**
 * The web app's steps on a GDSII file far above the whole-read size: the upload check from the on-disk index against
 * the whole-file check, and the tiled analysis in the worker, each in its own process (peak RSS of that step).
 * The file: BENCH_LARGE_GDS, or bench/make-files.ts's flat squares repeated to LARGE_SQUARES (default 4.6 M,
 * ≈ 300 MB) written to the temp folder once. BENCH_LARGE_STEPS picks steps (default: the two checks and the tiled analysis; analyse-whole for the comparison).
 * Measurements only, run by hand: `nice -n 10 npm run bench -- large-layout`.
 */
import { spawnSync } from 'node:child_process';
import { existsSync, readFileSync, statSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { flatSquaresN } from './make-files';

export default async function largeLayout(): Promise<void> {
  const n = Number(process.env.LARGE_SQUARES ?? 4_600_000);
  const file = process.env.BENCH_LARGE_GDS ?? join(tmpdir(), `trenchant-large-${n}.gds`);
  if (!existsSync(file)) writeFileSync(file, flatSquaresN(n));
  console.log(`${file}: ${(statSync(file).size / 2 ** 20).toFixed(0)} MiB`);
  const child = fileURLToPath(new URL('./large-layout-child.ts', import.meta.url));
  const model = readFileSync(fileURLToPath(new URL('../samples/models/deep-trench-continuous.json', import.meta.url)), 'utf8');
  for (const step of (process.env.BENCH_LARGE_STEPS ?? 'check-index,check-whole,analyse-tiled').split(',')) {
    const r = spawnSync(process.execPath, ['--import', 'tsx', child, step, file], { encoding: 'utf8', env: { ...process.env, BENCH_MODEL: model }, maxBuffer: 1 << 24 });
    console.log(r.stdout.trim() || `${step}: exit ${r.status} ${r.stderr.trim().split('\n').slice(-3).join(' ')}`);
  }
}
