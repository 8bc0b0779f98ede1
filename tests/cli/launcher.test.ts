/**
 * scripts/cli.mjs (what `npm run cli` runs): the compiled command line must print exactly what the TypeScript
 * sources print through tsx, rebuild itself when a source is newer than the bundle, fall back to the sources when
 * it cannot be built, and keep exit codes and large piped outputs whole. The launcher runs in a scratch copy of
 * the project (lib/, db/, scripts/, package files; node_modules linked package by package, so the bundle cache is
 * the copy's own), so editing a source there leaves the worktree alone.
 */
import { spawn, spawnSync } from 'node:child_process';
import { cpSync, mkdirSync, mkdtempSync, readdirSync, readFileSync, rmSync, statSync, symlinkSync, utimesSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { GdsiiWriter } from '@/lib/layout/gdsii-writer';

const repo = fileURLToPath(new URL('../..', import.meta.url));
const LONG = 180_000;

let root = '';
let gds = '';
const bundle = () => join(root, 'node_modules', '.cache', 'trenchant', 'cli.mjs');

function scratchProject(): string {
  const dir = mkdtempSync(join(tmpdir(), 'trenchant-launcher-'));
  for (const d of ['lib', 'db', 'scripts', 'samples/models']) cpSync(join(repo, d), join(dir, d), { recursive: true });
  for (const f of ['package.json', 'package-lock.json', 'tsconfig.json']) cpSync(join(repo, f), join(dir, f));
  mkdirSync(join(dir, 'node_modules'));
  for (const name of readdirSync(join(repo, 'node_modules'))) {
    if (!name.startsWith('.')) symlinkSync(join(repo, 'node_modules', name), join(dir, 'node_modules', name));
  }
  return dir;
}

/** 60 × 60 squares of 2 µm on a 5 µm pitch plus one triangle (3 600 openings: ≈ 0.4 MB of features JSON). */
function squares(dir: string): string {
  const w = new GdsiiWriter({ libraryName: 'LAUNCH' }).beginCell('TOP');
  for (let j = 0; j < 60; j++) for (let i = 0; i < 60; i++) w.rect(1, 0, i * 5000, j * 5000, i * 5000 + 2000, j * 5000 + 2000);
  w.boundary(2, 0, [0, 0, 9000, 0, 0, 7000]);
  const file = join(dir, 'squares.gds');
  writeFileSync(file, w.endCell().finish());
  return file;
}

interface Run {
  code: number | null;
  stdout: string;
  stderr: string;
}

function launcher(args: string[], env: Record<string, string> = {}): Run {
  const r = spawnSync(process.execPath, ['scripts/cli.mjs', ...args], { cwd: root, encoding: 'utf8', maxBuffer: 1 << 28, env: { ...process.env, ...env } });
  return { code: r.status, stdout: r.stdout, stderr: r.stderr };
}

const fromSource = (args: string[]) => launcher(args, { TRENCHANT_CLI_SOURCE: '1' });

beforeAll(() => {
  root = scratchProject();
  gds = squares(root);
}, LONG);

afterAll(() => {
  if (root) rmSync(root, { recursive: true, force: true });
});

describe('CLI launcher (scripts/cli.mjs)', () => {
  it(
    'builds the bundle on first use, and the compiled commands print what the sources print',
    () => {
      const first = launcher(['inspect', gds, '--json']);
      expect(first.code, first.stderr).toBe(0);
      expect(statSync(bundle()).isFile()).toBe(true);
      // The thread entries the bundle starts from beside itself are built with it.
      for (const f of ['analysis-helper-thread.mjs', 'features-thread.mjs', 'tile-thread.mjs']) expect(statSync(join(root, 'node_modules', '.cache', 'trenchant', f)).isFile()).toBe(true);
      expect(first.stdout).toBe(fromSource(['inspect', gds, '--json']).stdout);
      const cases = [
        ['density', gds, '--layer', '1/0', '--window-um', '50', '--step-um', '25', '--json'],
        ['features', gds, '--layer', '1/0', '--json'],
        ['check', gds, '--layer', '1/0', '--model', 'samples/models/deep-trench-continuous.json', '--json'],
        ['depth', '--model', 'samples/models/deep-trench-continuous.json', '--width-um', '2'],
      ];
      for (const args of cases) {
        const a = launcher(args), b = fromSource(args);
        expect(a.code, a.stderr).toBe(b.code);
        // check's timings differ from run to run; everything else must match byte for byte.
        const strip = (s: string) => s.replace(/"timingsMs":\{[^}]*\}/g, '"timingsMs":{}').replace(/"(elapsedMs|durationMs)":[0-9.]+/g, '"$1":0');
        expect(strip(a.stdout)).toBe(strip(b.stdout));
        expect(a.stdout.length).toBeGreaterThan(20);
      }
    },
    LONG,
  );

  it(
    'keeps exit codes and the one-line errors: usage (2), bad file (2)',
    () => {
      for (const args of [['nonsense'], ['inspect', join(root, 'missing.gds')], ['density', gds, '--layer', '9/0', '--window-um', '10', '--step-um', '5']]) {
        const a = launcher(args), b = fromSource(args);
        expect(a.code).toBe(2);
        expect(b.code).toBe(2);
        expect(a.stderr).toBe(b.stderr);
      }
      expect(launcher([]).code).toBe(2); // no command: usage, exit 2 (main.ts)
    },
    LONG,
  );

  it(
    'rebuilds when a source is newer than the bundle, and TRENCHANT_CLI_SOURCE=1 runs the sources without building',
    () => {
      expect(launcher(['--help']).code).toBe(0);
      const builtAt = statSync(bundle()).mtimeMs;
      const main = join(root, 'lib', 'cli', 'main.ts');
      writeFileSync(main, readFileSync(main, 'utf8').replace("'usage: npm run --silent cli", "'usage (edited copy): npm run --silent cli"));
      const later = new Date(builtAt + 5000);
      utimesSync(main, later, later);

      // Forced to the sources: the edit shows, the bundle is left as it was.
      expect(fromSource(['--help']).stdout).toContain('usage (edited copy)');
      expect(statSync(bundle()).mtimeMs).toBe(builtAt);

      const r = launcher(['--help']);
      expect(r.code).toBe(0);
      expect(r.stdout).toContain('usage (edited copy)');
      expect(statSync(bundle()).mtimeMs).toBeGreaterThan(builtAt);
      expect(readFileSync(bundle(), 'utf8')).toContain('usage (edited copy)');
    },
    LONG,
  );

  it(
    'falls back to the sources with a note on stderr when the bundle cannot be written',
    () => {
      const cache = join(root, 'node_modules', '.cache', 'trenchant');
      const saved = `${cache}.saved`;
      cpSync(cache, saved, { recursive: true });
      try {
        rmSync(cache, { recursive: true });
        writeFileSync(cache, 'a file where the cache folder should be'); // mkdir fails: nothing can be compiled
        const r = launcher(['inspect', gds, '--json']);
        expect(r.code).toBe(0);
        expect(r.stderr).toMatch(/running the command line from source/);
        expect(JSON.parse(r.stdout)).toMatchObject({ format: 'gdsii', libraryName: 'LAUNCH' });
      } finally {
        rmSync(cache, { force: true });
        cpSync(saved, cache, { recursive: true });
        rmSync(saved, { recursive: true });
      }
    },
    LONG,
  );

  it(
    'a compiled features --json over 1 MB piped into another process arrives whole, exit code kept',
    async () => {
      // 120 × 120 squares: ≈ 1.3 MB of JSON; Python's json module (standard library) is the reference parser.
      const w = new GdsiiWriter({ libraryName: 'PIPE' }).beginCell('TOP');
      for (let j = 0; j < 120; j++) for (let i = 0; i < 120; i++) w.rect(1, 0, i * 5000, j * 5000, i * 5000 + 2000, j * 5000 + 2000);
      const big = join(root, 'big.gds');
      writeFileSync(big, w.endCell().finish());
      const r = await new Promise<{ code: number | null; out: string; err: string }>((resolve) => {
        const cli = spawn(process.execPath, ['scripts/cli.mjs', 'features', big, '--layer', '1/0', '--json'], { cwd: root, stdio: ['ignore', 'pipe', 'pipe'] });
        const py = spawn('/usr/bin/python3', ['-c', "import json,sys\nraw=sys.stdin.buffer.read()\nprint(len(raw), len(json.loads(raw)['features']))"], { stdio: ['pipe', 'pipe', 'pipe'] });
        cli.stdout.pipe(py.stdin);
        let out = '', err = '';
        let code: number | null = null;
        cli.stderr.on('data', (d: Buffer) => (err += d.toString()));
        py.stdout.on('data', (d: Buffer) => (out += d.toString()));
        py.stderr.on('data', (d: Buffer) => (err += d.toString()));
        cli.on('close', (c) => (code = c));
        py.on('close', () => setTimeout(() => resolve({ code, out: out.trim(), err }), 50));
      });
      expect(r.code, r.err).toBe(0);
      const [bytes, count] = r.out.split(' ').map(Number);
      expect(bytes).toBeGreaterThan(1_000_000);
      expect(count).toBe(14_400); // 120 × 120 squares written above
    },
    LONG,
  );
});
