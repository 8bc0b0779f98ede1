/**
 * The command line as users run it, side by side with a gdspy + numpy script doing the same job, on generated
 * 1 M-polygon layouts (bench/make-files.ts, written to the OS temp folder and removed afterwards):
 *   density FILE --layer 1/0 --window-um 100 --step-um 50 --json  on hier.gds and flat.gds
 *     vs /usr/bin/python3 bench/gdspy_density_file.py FILE  (gdspy read + flatten + exact union per cell + numpy)
 *   check mixed.gds --layer 1/0 --model samples/models/deep-trench-continuous.json --json  (full analysis)
 * Wall time and peak RSS of each process (GNU time when installed), and the load average before and after: the
 * machine is shared, so run both sides in the same session. BENCH_BEFORE=/path/to/older/checkout also times that
 * checkout's CLI on the same files (it must have node_modules). Run: npm run bench -- cli
 */
import { spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { availableParallelism, loadavg, tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { flatSquares, hierarchicalSquares, mixedLayer } from './make-files';

const root = fileURLToPath(new URL('..', import.meta.url));
const TIME = existsSync('/usr/bin/time') ? '/usr/bin/time' : null;

interface Run {
  wallS: number;
  /** User + system CPU seconds (GNU time): steadier than wall time on a busy machine. */
  cpuS: number | null;
  rssMiB: number | null;
  stdout: string;
}

function timed(cmd: string, args: string[], cwd: string): Run {
  const t0 = performance.now();
  const r = TIME
    ? spawnSync(TIME, ['-f', '%M %U %S', 'nice', '-n', '10', cmd, ...args], { cwd, encoding: 'utf8', maxBuffer: 1 << 30 })
    : spawnSync('nice', ['-n', '10', cmd, ...args], { cwd, encoding: 'utf8', maxBuffer: 1 << 30 });
  const wallS = (performance.now() - t0) / 1000;
  if (r.status !== 0 && r.status !== 1) throw new Error(`${cmd} ${args.join(' ')} failed (${r.status}): ${r.stderr.slice(-400)}`);
  const [rssKb, user, sys] = TIME ? (r.stderr.trim().split('\n').at(-1) ?? '').split(' ').map(Number) : [];
  return { wallS, cpuS: user !== undefined && sys !== undefined && Number.isFinite(user + sys) ? user + sys : null, rssMiB: rssKb !== undefined && Number.isFinite(rssKb) ? rssKb / 1024 : null, stdout: r.stdout };
}

/** The faster of two runs (a busy machine only ever adds time). */
function best(run: () => Run): Run {
  const a = run(), b = run();
  return a.wallS <= b.wallS ? a : b;
}

// As `npm run cli` runs it: the launcher (compiled bundle) where the checkout has one, else the sources through tsx.
const cli = (checkout: string, args: string[]) =>
  timed(process.execPath, existsSync(join(checkout, 'scripts', 'cli.mjs')) ? ['scripts/cli.mjs', ...args] : ['--import', 'tsx', 'lib/cli/main.ts', ...args], checkout);
const fmt = (r: Run) => `${r.wallS.toFixed(2)} s wall${r.cpuS !== null ? ` / ${r.cpuS.toFixed(2)} s CPU` : ''}${r.rssMiB !== null ? `, ${r.rssMiB.toFixed(0)} MiB` : ''}`;
const load = () => loadavg().map((v) => v.toFixed(2)).join(' ');

export default async function cliBench(): Promise<void> {
  const dir = mkdtempSync(join(tmpdir(), 'trenchant-cli-bench-'));
  const before = process.env.BENCH_BEFORE;
  try {
    const files = { hier: join(dir, 'hier.gds'), flat: join(dir, 'flat.gds'), mixed: join(dir, 'mixed.gds') };
    writeFileSync(files.hier, hierarchicalSquares());
    writeFileSync(files.flat, flatSquares());
    writeFileSync(files.mixed, mixedLayer());
    console.log(`load average at start ${load()} on ${availableParallelism()} cores`);
    cli(root, ['inspect', files.hier]); // warm tsx's transform cache
    for (const name of ['hier', 'flat'] as const) {
      let line = `inspect (union area) ${name}: Trenchant ${fmt(best(() => cli(root, ['inspect', files[name], '--json'])))}`;
      if (before) line += `; before ${fmt(best(() => cli(before, ['inspect', files[name], '--json'])))}`;
      console.log(line);
    }
    for (const name of ['hier', 'flat'] as const) {
      const args = ['density', files[name], '--layer', '1/0', '--window-um', '100', '--step-um', '50', '--json'];
      const ours = best(() => cli(root, args));
      const j = JSON.parse(ours.stdout) as { nx: number; ny: number; mean: number };
      let line = `density 100/50 ${name}: Trenchant ${fmt(ours)} (${j.nx}×${j.ny} windows, mean ${j.mean.toFixed(6)})`;
      if (before) line += `; before ${fmt(best(() => cli(before, args)))}`;
      try {
        const py = timed('/usr/bin/python3', [join(root, 'bench/gdspy_density_file.py'), files[name]], root);
        const g = JSON.parse(py.stdout.trim().split('\n').at(-1) as string) as { nx: number; ny: number; mean: number };
        const cpuRatio = py.cpuS !== null && ours.cpuS !== null ? `, ${(py.cpuS / ours.cpuS).toFixed(1)}× in CPU time` : '';
        line += `; gdspy+numpy ${fmt(py)} (${g.nx}×${g.ny}, mean ${g.mean.toFixed(6)}) → ${(py.wallS / ours.wallS).toFixed(1)}× in wall time${cpuRatio}`;
      } catch (err) {
        line += `; gdspy comparison not run: ${(err as Error).message.split('\n')[0]}`;
      }
      console.log(line);
    }
    const model = join(root, 'samples/models/deep-trench-continuous.json');
    const args = ['check', files.mixed, '--layer', '1/0', '--model', model, '--json'];
    const ours = cli(root, args);
    type CheckOut = { summary: { timingsMs: Record<string, number>; features?: { count?: number } } };
    const stages = (r: Run) => JSON.stringify(Object.fromEntries(Object.entries((JSON.parse(r.stdout) as CheckOut).summary.timingsMs).map(([k, v]) => [k, Math.round(v)])));
    const s = (JSON.parse(ours.stdout) as CheckOut).summary;
    console.log(`check (full analysis) mixed 1 M polygons: Trenchant ${fmt(ours)}; ${s.features?.count ?? '?'} openings; stages ms ${stages(ours)}`);
    if (before) {
      const b = cli(before, args);
      console.log(`  before: ${fmt(b)}; stages ms ${stages(b)}`);
    }
    console.log(`load average at end ${load()}`);
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

if (import.meta.url === pathToFileURL(process.argv[1] ?? '').href) await cliBench();
