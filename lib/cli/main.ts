/**
 * `npm run --silent cli -- <command> ...`: Trenchant's command line for users' scripts and CI.
 * Each command lives in its own module and exports `run(argv): Promise<number>` (the exit code).
 * Exit codes: 0 success, 1 the check found errors (only `check`), 2 bad input or usage.
 */
type CommandModule = { run: (argv: string[]) => Promise<number> };

const commands: Record<string, { summary: string; load: () => Promise<CommandModule> }> = {
  inspect: { summary: 'layout summary: top cell, units, per-layer counts, union areas, bounding boxes', load: () => import('./inspect') },
  density: { summary: 'window density of one layer (rule-manual windows)', load: () => import('./density') },
  features: { summary: 'openings of one layer with kind, area and widths', load: () => import('./features') },
  depth: { summary: 'predicted etch depth of one opening width under a process model', load: () => import('./depth') },
  check: { summary: 'full etch-loading check of a layout against a process model', load: () => import('./check') },
};

function usage(): string {
  const rows = Object.entries(commands).map(([name, c]) => `  ${name.padEnd(9)} ${c.summary}`);
  return ['usage: npm run --silent cli -- <command> [options]', '', 'commands:', ...rows, '', 'Add --help after a command for its options.'].join('\n');
}

async function main(argv: string[]): Promise<number> {
  const [name, ...rest] = argv;
  if (!name || name === '--help' || name === '-h') {
    console.log(usage());
    return name ? 0 : 2;
  }
  const command = commands[name];
  if (!command) {
    console.error(`trenchant: unknown command "${name}"\n\n${usage()}`);
    return 2;
  }
  return (await command.load()).run(rest);
}

// Never process.exit(): stdout to a pipe is asynchronous, and exiting drops what is still queued (output stopped
// at 64 KiB). Setting exitCode lets Node drain stdout and stderr, then exit with that code.
main(process.argv.slice(2)).then(
  (code) => {
    process.exitCode = code;
  },
  (err: unknown) => {
    // Commands report expected problems themselves; anything reaching here is a bug, but users still get one line.
    console.error(`trenchant: internal error: ${err instanceof Error ? err.message : String(err)}`);
    process.exitCode = 2;
  },
);
