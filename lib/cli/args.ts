import { parseArgs, type ParseArgsConfig } from 'node:util';

/** Print the reader's repairs (unclosed boundaries, ...) on stderr, one line each, so none is silent. */
export function printLayoutWarnings(file: string, warnings: readonly { message: string }[] | undefined): void {
  for (const w of warnings ?? []) process.stderr.write(`trenchant: warning: ${file}: ${w.message}\n`);
}

/** Thrown for a usage problem; the command prints the message and exits 2. */
export class UsageError extends Error {}

type Options = NonNullable<ParseArgsConfig['options']>;

/**
 * Parse a command's argv with node:util's parseArgs (strict: unknown options are errors) and turn its
 * exceptions into UsageError with a one-line message.
 */
export function parseCommandArgs<O extends Options>(argv: string[], options: O) {
  try {
    return parseArgs({ args: joinNegativeValues(argv, options), options, allowPositionals: true, strict: true });
  } catch (err) {
    // node's messages can span lines; commands promise one-line errors.
    throw new UsageError((err instanceof Error ? err.message : String(err)).replace(/\s*\n\s*/g, ' '));
  }
}

/**
 * node's parseArgs refuses `--origin-um -10,5` (a value starting with "-" looks like an option to it). A value
 * option followed by something that reads as a negative number is joined into `--origin-um=-10,5`.
 */
function joinNegativeValues(argv: string[], options: Options): string[] {
  const out: string[] = [];
  for (let k = 0; k < argv.length; k++) {
    const a = argv[k] as string, next = argv[k + 1];
    const name = a.startsWith('--') && !a.includes('=') ? a.slice(2) : undefined;
    if (name !== undefined && options[name]?.type === 'string' && next !== undefined && /^-(\d|\.\d)/.test(next)) {
      out.push(`${a}=${next}`);
      k++;
    } else out.push(a);
  }
  return out;
}

/** Parse a finite number option, naming the option in the error. */
export function numberOption(name: string, value: string | undefined, fallback?: number): number {
  if (value === undefined) {
    if (fallback === undefined) throw new UsageError(`missing --${name}`);
    return fallback;
  }
  const n = Number(value);
  if (!Number.isFinite(n)) throw new UsageError(`--${name} must be a number, got "${value}"`);
  return n;
}

/** Parse "L/D" (layer/datatype), e.g. "5/0"; a bare "5" means datatype 0. */
export function layerOption(value: string | undefined): { layer: number; datatype: number } {
  if (value === undefined) throw new UsageError('missing --layer L/D (for example --layer 5/0)');
  const m = /^(\d+)(?:\/(\d+))?$/.exec(value.trim());
  if (!m) throw new UsageError(`--layer must look like L/D (for example 5/0), got "${value}"`);
  return { layer: Number(m[1]), datatype: Number(m[2] ?? 0) };
}

/**
 * Run a command body: usage errors and errors marked as user-facing print one line and give exit 2;
 * no stack traces reach the user.
 */
export async function runCommand(name: string, body: () => Promise<number>): Promise<number> {
  try {
    return await body();
  } catch (err) {
    const message = err instanceof Error ? err.message : String(err);
    console.error(`trenchant ${name}: ${message}`);
    return 2;
  }
}
