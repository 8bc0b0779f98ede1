/**
 * Predicted depth, loading factor, ARDE factor and time to target through `depth --json`, against a hand calculation
 * written without Trenchant's code (tests/fixtures/verify/make_etch.py): Berman's closed form for holes, an own
 * Nyström solution of the slot integral equation for trenches (checked there against domain.md 3.2's table), the
 * Coburn–Winters bottom flux, the centre ion fractions erf(θa/(√2σ)) and 1 − cos^(n+1)θa, the (1 + r)/(1/Φn + r/Φi)
 * combination, loading 1/(1 + κρ + ΦA), and depth from t(h) = ∫dh/R by scipy quad + brentq (scipy 1.10.1).
 * Models: tests/fixtures/verify/etch_*.json (invented values).
 */
import { execFile } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { promisify } from 'node:util';
import { describe, expect, it } from 'vitest';

const dir = fileURLToPath(new URL('../fixtures/verify/', import.meta.url));
const root = fileURLToPath(new URL('../../', import.meta.url));
interface Case { model: string; kind: 'hole' | 'trench'; widthUm: number; density: number; exposedFraction: number | null; loadingFactor: number; depthUm: number; ardeFactorAtDepth: number; timeToTargetMin: number }
const { cases } = JSON.parse(readFileSync(`${dir}etch_expected.json`, 'utf8')) as { cases: Case[] };
const run = promisify(execFile);

describe('depth --json against the hand calculation', () => {
  for (const c of cases) {
    it(`${c.model}: ${c.kind} ${c.widthUm} µm, ρ ${c.density}, A ${c.exposedFraction ?? 0}`, async () => {
      const args = ['scripts/cli.mjs', 'depth', '--model', `${dir}etch_${c.model}.json`, '--width-um', String(c.widthUm), '--kind', c.kind, '--density', String(c.density), '--json'];
      if (c.exposedFraction !== null) args.push('--exposed-fraction', String(c.exposedFraction));
      const got = JSON.parse((await run(process.execPath, args, { cwd: root, timeout: 60_000 })).stdout) as { depthUm: number; loadingFactor: number; ardeFactor: number; timeToTargetMin: number };
      expect(got.loadingFactor).toBeCloseTo(c.loadingFactor, 12); // 1/(1 + κρ + ΦA), exact arithmetic
      // Holes: Berman's form on both sides, so only quadrature/root-finding round-off (measured ≤ 1.1e-10 relative).
      // Trenches: Trenchant interpolates a tabulated solution of the slot integral equation; the hand solution is
      // direct (measured ≤ 5e-8 on depth and time, ≤ 1.2e-6 on the pointwise ARDE factor).
      const tol = c.kind === 'hole' ? 1e-8 : 5e-6;
      expect(Math.abs(got.depthUm / c.depthUm - 1), 'depth at the etch time').toBeLessThan(tol);
      expect(Math.abs(got.timeToTargetMin / c.timeToTargetMin - 1), 'time to target').toBeLessThan(tol);
      expect(Math.abs(got.ardeFactor / c.ardeFactorAtDepth - 1), 'ARDE factor at the reached depth').toBeLessThan(tol);
    }, 60_000);
  }
});
