/**
 * `npm run bench`: runs every bench/*.bench.ts in name order. Each exports `default async function (): Promise<void>`
 * that prints its own figures. Benchmarks are measurements, never pass/fail tests. Optional filter: a substring
 * of the file name (`npm run bench -- read`).
 */
import { readdirSync } from 'node:fs';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { join } from 'node:path';

const dir = fileURLToPath(new URL('.', import.meta.url));
const filter = process.argv[2] ?? '';
const files = readdirSync(dir).filter((f) => f.endsWith('.bench.ts') && f.includes(filter)).sort();
for (const f of files) {
  console.log(`\n== ${f} ==`);
  const mod = (await import(pathToFileURL(join(dir, f)).href)) as { default?: () => Promise<void> };
  if (typeof mod.default !== 'function') {
    console.log(`(skipped: ${f} has no default export function)`);
    continue;
  }
  const t0 = performance.now();
  await mod.default();
  console.log(`(${f}: ${((performance.now() - t0) / 1000).toFixed(1)} s)`);
}
