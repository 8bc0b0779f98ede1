/**
 * `npm run --silent cli -- check FILE --layer L/D --model MODEL.json [options]`: the full etch-loading check of a
 * layout against a process model, without a server — the same runAnalysis the app's workers run.
 * Exit codes: 0 no error-severity flag, 1 at least one error-severity flag, 2 bad input or usage (one line on
 * stderr; with --json also one JSON object { ok: false, error } on stdout).
 */
import { rmSync } from 'node:fs';
import { mkdir, readFile } from 'node:fs/promises';
import { join, resolve } from 'node:path';
import { formatModelIssues, parseProcessModel, type ProcessModel } from '../etch';
import { readLayoutFile } from '../layout/read';
import type { FlatLayout } from '../layout/types';
import { formatMethodBlock } from '../methods/method-block';
import { AnalysisInputError } from '../pipeline/errors';
import type { Flag } from '../pipeline/flags';
import { writeGridFile } from '../pipeline/grid-file-node';
import { runAnalysis, type AnalysisResult } from '../pipeline/run-analysis';
import { parseAnalysisSettings, type FieldIssue } from '../pipeline/settings';
import type { AnalysisSummary } from '../pipeline/summary';
import { mapFileName } from '../pipeline/map-files';
import { layerOption, numberOption, parseCommandArgs, printLayoutWarnings, runCommand, UsageError } from './args';
import type { TileSource } from '../layout/tile-source';
import { startAnalysisHelper } from '../pipeline/analysis-helper';

const HELP = `usage: npm run --silent cli -- check FILE --layer L/D --model MODEL.json [options]

Runs the full check: open area, density windows, effective density, openings and widths, predicted depth per
opening under the process model, flags. Exit 0 when no error-severity flag, 1 when there are, 2 on bad input.
  --layer L/D           etch layer (repeat to merge several layers)
  --model FILE          process model JSON
  --json                print one JSON object (summary, flags; --features adds per-opening results)
  --settings FILE       analysis settings JSON; the options below override it
  --polarity P          clear (drawn shapes are openings, default) or dark
  --window-um W --step-um S   density window and step in µm (repeat both, in pairs; default 100/50 and 700/70)
  --edge E              clipped (default) or full
  --pixel-um P          pixel size in µm (default automatic)
  --kernel K            gaussian or exponential (default: the model's)
  --kernel-um L         kernel length in µm (default: the model's loading length)
  --min-density D --max-density D   window density limits, fraction (0.2) or percent (20%)
  --max-gradient D      largest density difference between neighbouring windows
  --max-ar R            aspect-ratio limit (default: the model's)
  --target-um T --tolerance-um T    target depth and tolerance (default: the model's)
  --stop-budget-um B    allowed depth into the stop layer
  --min-width-um W      minimum width rule
  --out-dir DIR         also write the result maps (TRGRID1 files) to DIR
  --top CELL            flatten this cell instead of the automatic top cell
  --show N              flags listed in the table (default 40; --json lists all kept flags)
  --features            with --json, include per-opening results
  --tiles UM            analyse in tiles of UM µm (same result; the tiled path for layouts too big for one pass)
  --tile-margin-um M    tile margin in µm (default 25; wider openings are re-read, the result does not change)
  --threads N           worker threads for the tiles (default 2; 0 = this thread)`;

/** A bad-input problem with an optional list of field issues (printed in --json output). */
class CheckInputError extends Error {
  constructor(
    readonly code: string,
    message: string,
    readonly issues?: FieldIssue[],
  ) {
    super(message);
  }
}

function fractionOption(name: string, value: string | undefined): number | undefined {
  if (value === undefined) return undefined;
  const pct = value.trim().endsWith('%');
  const n = Number(pct ? value.trim().slice(0, -1) : value);
  if (!Number.isFinite(n)) throw new UsageError(`--${name} must be a fraction (0.2) or a percentage (20%), got "${value}"`);
  return pct ? n / 100 : n;
}

async function readJsonFile(path: string, what: string): Promise<unknown> {
  let text: string;
  try {
    text = await readFile(path, 'utf8');
  } catch (err) {
    const code = (err as NodeJS.ErrnoException).code;
    throw new CheckInputError('unreadable-file', `${path}: cannot read the ${what}: ${code === 'ENOENT' ? 'no such file' : code ?? String(err)}`);
  }
  try {
    return JSON.parse(text);
  } catch (err) {
    throw new CheckInputError('bad-json', `${path}: the ${what} is not valid JSON: ${err instanceof Error ? err.message : String(err)}`);
  }
}

const num = (v: number, digits = 4) => (Number.isFinite(v) ? Number(v.toPrecision(digits)).toString() : String(v));
const pct = (v: number) => `${num(v * 100, 3)} %`;
const show = (v: number, unit: Flag['unit']) => (unit === 'fraction' ? pct(v) : unit === '%' ? `${num(v)} %` : unit === 'µm' ? `${num(v)} µm` : `${num(v)}:1`);

function summaryText(file: string, s: AnalysisSummary): string {
  const out: string[] = [];
  const L = s.layout;
  out.push(
    `file             ${file} (${L.format === 'gdsii' ? 'GDSII' : 'CSV'}${L.topCell ? `, top cell ${L.topCell}` : ''})`,
    `etch layers      ${L.etchLayers.join(' + ')}, ${L.polygonCount} polygons, ${s.features.count} openings${Object.keys(s.features.byShape).length ? ` (${Object.entries(s.features.byShape).map(([k, n]) => `${n} ${k}`).join(', ')})` : ''}`,
    `die              ${num(L.dieBboxUm[2] - L.dieBboxUm[0])} × ${num(L.dieBboxUm[3] - L.dieBboxUm[1])} µm, pixel ${num(s.grid.pixelUm)} µm (${s.grid.nx}×${s.grid.ny})`,
    `model            ${s.model.name} version ${s.model.version}`,
    `global density   ${pct(s.globalDensity)}`,
  );
  for (const w of s.windows) {
    out.push(
      `${`windows ${num(w.windowUm)}/${num(w.stepUm)} µm`.padEnd(16)} min ${pct(w.min)} (window from (${num(w.minAtUm[0])}, ${num(w.minAtUm[1])})), max ${pct(w.max)} (window from (${num(w.maxAtUm[0])}, ${num(w.maxAtUm[1])})), largest neighbour difference ${pct(w.maxGradient)}`,
    );
  }
  out.push(`effective dens.  ${pct(s.effectiveDensity.min)} to ${pct(s.effectiveDensity.max)} (${s.effectiveDensity.kernel}, L = ${num(s.effectiveDensity.lengthUm)} µm)`);
  if (s.depth) {
    out.push(
      `predicted depth  ${num(s.depth.minUm)} to ${num(s.depth.maxUm)} µm (spread ${num(s.depth.spreadUm)} µm; target ${num(s.limits.targetDepthUm)} ± ${num(s.limits.toleranceUm)} µm); ${s.depth.reachingTarget} of ${s.features.count} openings reach it`,
    );
  } else out.push('predicted depth  no openings on the etch layers');
  const f = s.flags;
  out.push(`flags            ${f.bySeverity.error} error, ${f.bySeverity.warning} warning, ${f.bySeverity.info} info`);
  for (const e of s.extrapolation.slice(0, 5)) out.push(`model note       ${e.message}${e.count > 1 ? ` (${e.count} openings)` : ''}`);
  return out.join('\n');
}

function flagsText(flags: Flag[], total: number, limit: number): string {
  if (flags.length === 0) return 'No flags.';
  const shown = flags.slice(0, limit);
  const out: string[] = [];
  for (const f of shown) {
    const where = f.featureId !== undefined ? `opening #${f.featureId} at (${num(f.xUm)}, ${num(f.yUm)}) µm` : `at (${num(f.xUm)}, ${num(f.yUm)}) µm`;
    out.push(`${f.severity.toUpperCase().padEnd(8)}${f.kind.padEnd(30)}${where}: ${show(f.measured, f.unit)} (limit ${show(f.limit, f.unit)})`);
    out.push(`        ${f.message}`);
  }
  if (total > shown.length) out.push(`… ${total - shown.length} more flag(s) not shown (use --json or --show N).`);
  return out.join('\n');
}

export async function run(argv: string[]): Promise<number> {
  let json = false;
  return runCommand('check', async () => {
    const { values, positionals } = parseCommandArgs(argv, {
      layer: { type: 'string', multiple: true },
      model: { type: 'string' },
      json: { type: 'boolean' },
      settings: { type: 'string' },
      polarity: { type: 'string' },
      'window-um': { type: 'string', multiple: true },
      'step-um': { type: 'string', multiple: true },
      edge: { type: 'string' },
      'pixel-um': { type: 'string' },
      kernel: { type: 'string' },
      'kernel-um': { type: 'string' },
      'min-density': { type: 'string' },
      'max-density': { type: 'string' },
      'max-gradient': { type: 'string' },
      'max-ar': { type: 'string' },
      'target-um': { type: 'string' },
      'tolerance-um': { type: 'string' },
      'stop-budget-um': { type: 'string' },
      'min-width-um': { type: 'string' },
      'out-dir': { type: 'string' },
      top: { type: 'string' },
      show: { type: 'string' },
      features: { type: 'boolean' },
      tiles: { type: 'string' },
      'tile-margin-um': { type: 'string' },
      threads: { type: 'string' },
      help: { type: 'boolean', short: 'h' },
    });
    json = values.json === true;
    if (values.help) {
      console.log(HELP);
      return 0;
    }
    try {
      return await check(values, positionals);
    } catch (err) {
      if (json && (err instanceof CheckInputError || err instanceof UsageError)) {
        const code = err instanceof CheckInputError ? err.code : 'usage';
        const issues = err instanceof CheckInputError ? err.issues : undefined;
        console.log(JSON.stringify({ ok: false, error: { code, message: err.message, ...(issues ? { issues } : {}) } }));
      }
      throw err;
    }
  });
}

type Values = Record<string, string | boolean | string[] | undefined>;

async function check(values: Values, positionals: string[]): Promise<number> {
  const str = (k: string) => (typeof values[k] === 'string' ? (values[k] as string) : undefined);
  const list = (k: string) => (Array.isArray(values[k]) ? (values[k] as string[]) : []);
  const file = positionals[0];
  if (!file || positionals.length > 1) throw new UsageError('expected one FILE argument (see --help)');
  const layers = list('layer').map((l) => layerOption(l));
  if (layers.length === 0) throw new UsageError('missing --layer L/D (for example --layer 5/0)');
  const modelPath = str('model');
  if (!modelPath) throw new UsageError('missing --model MODEL.json');

  // Settings: file (if any), then command-line options on top.
  const base = str('settings') ? await readJsonFile(str('settings') as string, 'settings file') : {};
  if (base === null || typeof base !== 'object' || Array.isArray(base)) throw new CheckInputError('bad-settings', `${str('settings')}: settings must be a JSON object`);
  const input = structuredClone(base) as Record<string, unknown>;
  input.etchLayers = layers;
  if (str('polarity') !== undefined) input.polarity = str('polarity');
  if (str('edge') !== undefined) input.windowEdge = str('edge');
  const winds = list('window-um');
  const steps = list('step-um');
  if (winds.length !== steps.length) throw new UsageError(`--window-um and --step-um come in pairs: got ${winds.length} window(s) and ${steps.length} step(s)`);
  if (winds.length) input.densityWindows = winds.map((w, k) => ({ windowUm: numberOption('window-um', w), stepUm: numberOption('step-um', steps[k]) }));
  const pixel = { ...((input.pixel as object | undefined) ?? {}) } as Record<string, unknown>;
  if (str('pixel-um') !== undefined) pixel.sizeUm = numberOption('pixel-um', str('pixel-um'));
  input.pixel = pixel;
  const kernel = { ...((input.kernel as object | undefined) ?? {}) } as Record<string, unknown>;
  if (str('kernel') !== undefined) kernel.kind = str('kernel');
  if (str('kernel-um') !== undefined) kernel.lengthUm = numberOption('kernel-um', str('kernel-um'));
  input.kernel = kernel;
  const limits = { ...((input.limits as object | undefined) ?? {}) } as Record<string, unknown>;
  const setLimit = (opt: string, key: string, parse: (name: string, v: string | undefined) => number | undefined) => {
    const v = str(opt);
    if (v !== undefined) limits[key] = parse(opt, v);
  };
  setLimit('min-density', 'minDensity', fractionOption);
  setLimit('max-density', 'maxDensity', fractionOption);
  setLimit('max-gradient', 'maxGradient', fractionOption);
  setLimit('max-ar', 'maxAspectRatio', numberOption);
  setLimit('target-um', 'targetDepthUm', numberOption);
  setLimit('tolerance-um', 'toleranceUm', numberOption);
  setLimit('stop-budget-um', 'stopOverEtchBudgetUm', numberOption);
  setLimit('min-width-um', 'minWidthUm', numberOption);
  input.limits = limits;
  const showN = str('show') !== undefined ? numberOption('show', str('show')) : 40;

  const settings = parseAnalysisSettings(input);
  if (!settings.ok) {
    throw new CheckInputError('bad-settings', `invalid settings: ${settings.issues.map((i) => `${i.path || '(root)'}: ${i.message}`).join('; ')}`, settings.issues);
  }
  const modelJson = await readJsonFile(modelPath, 'process model');
  const parsed = parseProcessModel(modelJson);
  if (!parsed.ok) throw new CheckInputError('bad-model', `${modelPath}: invalid process model: ${formatModelIssues(parsed.issues)}`, parsed.issues);
  const model: ProcessModel = parsed.model;

  const topCell = str('top');
  const layoutError = (err: unknown) => {
    const code = (err as { code?: unknown }).code;
    const message = err instanceof Error ? err.message : String(err);
    return new CheckInputError(typeof code === 'string' ? `layout-${code}` : 'layout', message.includes(file) ? message : `${file}: ${message}`);
  };
  // Tiled: the file is indexed on disk and read one tile at a time (GDSII larger than memory); else read whole.
  let source: TileSource | null = null;
  let layout: FlatLayout | null = null;
  // The analysis's helper thread starts now, so its start-up (module loading) overlaps reading the file.
  const helper = str('tiles') === undefined ? startAnalysisHelper() : null;
  try {
    // The tiled path (its on-disk index, worker pools and queue code) is loaded only when asked for.
    // A GDSII index in shared memory: the worker threads read it instead of indexing the file again.
    if (str('tiles') !== undefined) source = await (await import('../layout/open-tile-source')).openLayoutTileSource(file, { shared: true, ...(topCell !== undefined ? { topCell } : {}) });
    else layout = await readLayoutFile(file, topCell !== undefined ? { topCell } : {});
  } catch (err) {
    helper?.close();
    throw layoutError(err);
  }
  printLayoutWarnings(file, source ? source.header.warnings : layout?.warnings);

  let result: AnalysisResult;
  let tiledNote: string | null = null;
  let tiledJson: Record<string, unknown> | null = null;
  try {
    if (str('tiles') !== undefined) {
      const tileUm = numberOption('tiles', str('tiles'));
      const marginUm = str('tile-margin-um') !== undefined ? numberOption('tile-margin-um', str('tile-margin-um')) : undefined;
      const threads = str('threads') !== undefined ? numberOption('threads', str('threads')) : 2;
      if (!Number.isInteger(threads) || threads < 0 || threads > 64) throw new UsageError('--threads must be a whole number from 0 to 64');
      // Each worker thread opens the file itself from the spec (its own file handle; the index is the one above).
      const spec = { kind: 'file' as const, path: resolve(file), ...(topCell !== undefined ? { topCell } : {}) };
      let tiled;
      try {
        const { runTiledAnalysis } = await import('../pipeline/tiled/run-tiled');
        // --features needs every opening in memory; otherwise many openings spill to disk (same results).
        tiled = await runTiledAnalysis(source as TileSource, settings.settings, model, { tileUm, ...(marginUm !== undefined ? { marginUm } : {}), threads, spec, ...(values.features === true ? { spill: null } : {}) });
      } finally {
        source?.close();
      }
      // The check prints no per-opening rows: a spilled run's feature file is not needed.
      if (tiled.featureFile) rmSync(tiled.featureFile.path, { force: true });
      result = tiled;
      const t = tiled.tiled;
      tiledNote = `tiles            ${t.tiles} of ${num(t.plan.tileUm)} µm, margin ${num(t.plan.marginDbu * t.plan.dbuUm)} µm, ${t.growJobs} re-read(s) for wider openings, ${t.threads || 'no'} worker thread(s), ${num(t.tilePhaseMs / 1000)} s`;
      const { marginReason, ...plan } = t.plan;
      tiledJson = { ...t, plan: { ...plan, marginReason } };
    } else result = runAnalysis(layout as FlatLayout, settings.settings, model, { helper });
  } catch (err) {
    if (err instanceof AnalysisInputError) throw new CheckInputError(err.code, `${file}: ${err.message}`);
    throw err;
  } finally {
    helper?.close();
  }

  const outDir = str('out-dir');
  const written: string[] = [];
  if (outDir) {
    await mkdir(outDir, { recursive: true });
    for (const map of result.maps) {
      const name = mapFileName(map);
      await writeGridFile(join(outDir, name), map);
      written.push(name);
    }
  }

  const s = result.summary;
  const exitCode = s.flags.bySeverity.error > 0 ? 1 : 0;
  if (values.json === true) {
    const { settings: usedSettings, ...rest } = s;
    console.log(JSON.stringify({ ok: true, exitCode, file, summary: { ...rest, settings: usedSettings }, ...(tiledJson ? { tiled: tiledJson } : {}), flags: result.flags, ...(values.features ? { features: result.features } : {}), ...(outDir ? { maps: written.map((f) => join(outDir, f)) } : {}) }));
  } else {
    console.log(summaryText(file, s));
    if (tiledNote) console.log(tiledNote);
    console.log('');
    console.log(flagsText(result.flags, s.flags.total, Math.max(0, Math.floor(showN))));
    console.log('');
    console.log('Method');
    console.log(formatMethodBlock(s.method).replace(/^/gm, '  '));
    if (outDir) console.log(`\nMaps written to ${outDir}: ${written.join(', ')}`);
    console.log(`\nCaution: ${s.caution}`);
  }
  return exitCode;
}
