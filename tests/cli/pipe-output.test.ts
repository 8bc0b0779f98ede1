/**
 * Every command writes its whole output before it exits, also when stdout is a pipe (output used to stop at
 * 64 KiB because the process exited while the pipe was still draining). The reader here is a child Python process
 * that parses the JSON, as users' scripts do; Python's json module is the reference parser (Python 3 standard
 * library), so a cut output fails the test.
 */
import { spawn } from 'node:child_process';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { GdsiiWriter } from '@/lib/layout/gdsii-writer';

const root = fileURLToPath(new URL('../..', import.meta.url));

/** 120 × 120 squares of 2 µm on a 5 µm pitch, written flat (14 400 openings → several MB of features JSON). */
function manySquares(): string {
  const w = new GdsiiWriter({ libraryName: 'PIPE' }).beginCell('TOP');
  for (let j = 0; j < 120; j++) for (let i = 0; i < 120; i++) w.rect(1, 0, i * 5000, j * 5000, i * 5000 + 2000, j * 5000 + 2000);
  const file = join(mkdtempSync(join(tmpdir(), 'trenchant-pipe-')), 'squares.gds');
  writeFileSync(file, w.endCell().finish());
  return file;
}

/** Run the CLI with stdout piped straight into a Python process that parses it and prints the byte count. */
function cliThroughPython(args: string[], check: string): Promise<{ code: number | null; pyCode: number | null; py: string; stderr: string }> {
  return new Promise((resolve) => {
    const cli = spawn(process.execPath, ['--import', 'tsx', 'lib/cli/main.ts', ...args], { cwd: root, stdio: ['ignore', 'pipe', 'pipe'] });
    const py = spawn('/usr/bin/python3', ['-c', `import json,sys\nraw=sys.stdin.buffer.read()\nj=json.loads(raw)\nprint(len(raw), ${check})`], { stdio: ['pipe', 'pipe', 'pipe'] });
    cli.stdout.pipe(py.stdin);
    let stderr = '';
    let out = '';
    cli.stderr.on('data', (d: Buffer) => (stderr += d.toString()));
    py.stdout.on('data', (d: Buffer) => (out += d.toString()));
    py.stderr.on('data', (d: Buffer) => (stderr += d.toString()));
    let code: number | null = null;
    cli.on('close', (c) => (code = c));
    py.on('close', (pc) => setTimeout(() => resolve({ code, pyCode: pc, py: out.trim(), stderr }), 50));
  });
}

describe('CLI output through a pipe', () => {
  const file = manySquares();

  it('features --json over 1 MB arrives whole and parses in a child process', async () => {
    const r = await cliThroughPython(['features', file, '--layer', '1/0', '--json'], "len(j['features'])");
    expect(r.pyCode, r.stderr).toBe(0);
    expect(r.code).toBe(0);
    const [bytes, count] = r.py.split(' ').map(Number);
    expect(bytes).toBeGreaterThan(1_000_000);
    expect(count).toBe(14_400); // 120 × 120 squares written above
  });

  it('density --json with small windows (many values) arrives whole', async () => {
    const r = await cliThroughPython(['density', file, '--layer', '1/0', '--window-um', '5', '--step-um', '1', '--json'], "j['nx']*j['ny'], sum(len(r) for r in j['values'])");
    expect(r.pyCode, r.stderr).toBe(0);
    expect(r.code).toBe(0);
    const [bytes, n, listed] = r.py.split(' ').map(Number);
    expect(bytes).toBeGreaterThan(1_000_000);
    expect(listed).toBe(n);
  });

  it('inspect --json through a pipe keeps the exit code 2 and one stderr line on bad input', async () => {
    const bad = join(mkdtempSync(join(tmpdir(), 'trenchant-pipe-')), 'bad.gds');
    writeFileSync(bad, new Uint8Array(200).fill(7));
    const r = await cliThroughPython(['inspect', bad, '--json'], '0');
    expect(r.code).toBe(2);
    expect(r.stderr.split('\n').filter((l) => l.startsWith('trenchant')).length).toBe(1);
  });
});
