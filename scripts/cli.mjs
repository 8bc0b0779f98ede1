// `npm run cli -- …` starts here. Runs the command line compiled (node_modules/.cache/trenchant/cli.mjs, one
// esbuild bundle of lib/cli/main.ts) instead of compiling the TypeScript through tsx on every run: that cost
// ≈ 0.3–0.6 s of CPU per command. The bundle, and the thread files it starts from beside itself (analysis helper,
// feature and tile threads), are rebuilt here when missing or older than any of their sources, which takes
// about a second once. If they cannot be built (esbuild missing, a compile error) or TRENCHANT_CLI_SOURCE=1 is
// set, the sources run through tsx as before. Either way the command runs in this process, so stdout, stderr
// and the exit code are the command's own (main.ts sets process.exitCode and never calls process.exit).
import path from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { compileEntries, ENTRIES, OUT_DIR_REL, staleReason } from './esbuild-entries.mjs';

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
/** The bundle and the thread entries it finds beside itself (new URL('./x.mjs', import.meta.url) in lib/). */
const NEEDED = ['cli.mjs', 'analysis-helper-thread.mjs', 'features-thread.mjs', 'tile-thread.mjs'];

/** Path of an up-to-date bundle, building what is stale; null when it cannot be had. */
async function compiledCli() {
  if (process.env.TRENCHANT_CLI_SOURCE === '1') return null;
  try {
    const stale = ENTRIES.filter((e) => NEEDED.includes(e.out) && staleReason(root, e.out) !== null);
    if (stale.length > 0) await compileEntries(root, stale);
    return path.join(root, OUT_DIR_REL, 'cli.mjs');
  } catch (err) {
    const first = String(err instanceof Error ? err.message : err).split('\n')[0];
    process.stderr.write(`[trenchant] running the command line from source (could not compile it: ${first})\n`);
    return null;
  }
}

const bundle = await compiledCli();
if (bundle) {
  // A bundle that fails while loading has not started the command yet (main() runs last), so falling back is safe.
  try {
    await import(pathToFileURL(bundle).href);
  } catch (err) {
    process.stderr.write(`[trenchant] running the command line from source (compiled file failed to load: ${err instanceof Error ? err.message : err})\n`);
    await fromSource();
  }
} else await fromSource();

async function fromSource() {
  const { register } = await import('tsx/esm/api');
  register();
  await import(pathToFileURL(path.join(root, 'lib', 'cli', 'main.ts')).href);
}
