/**
 * `npm run --silent cli -- density FILE --layer L/D --window-um W --step-um S [options]`: rule-manual window
 * density of one layer, with the method block (origin, denominator, edge policy) printed beside the numbers.
 * Exit 0 on success, 2 on bad input or usage (one line on stderr).
 */
import { layerOption, numberOption, parseCommandArgs, printLayoutWarnings, runCommand, UsageError } from './args';
import { readLayoutFile } from '../layout/read';
import type { FlatLayout, PolygonSet } from '../layout/types';
import { alignedPixelUm, coverageRaster64, gridForBox, lengthGcd, setBbox, windowDensity, type Box, type Polarity } from '../geometry';

const HELP = `usage: npm run --silent cli -- density FILE --layer L/D --window-um W --step-um S [options]

Open-area density of one layer in square windows of side W stepped by S (µm).
  --json               one JSON object (values[j][i], j along +y)
  --pixel-um P         raster pixel; default: the largest divisor of gcd(W, S) keeping the grid ≤ 16 M pixels
  --origin-um X,Y      lower-left corner of window (0,0); default: lower-left of the layout bounding box
  --edge full|clipped  only full windows (default), or clip windows at the far edges
  --polarity clear|dark  clear: drawn shapes are open (default); dark: the region minus the shapes is open
  --region-layer L/D   reference region from a boundary layer (default: layout bounding box; clear polarity only)
  --top CELL           flatten this cell instead of the automatically chosen top cell`;

const CAUTION =
  'Estimate for planning: the foundry rule manual and sign-off deck take precedence; results differ with origin, denominator and edge policy (printed above).';

export function findLayer(layout: FlatLayout, spec: { layer: number; datatype: number }, file: string): PolygonSet {
  const set = layout.layers.find((l) => l.layer === spec.layer && l.datatype === spec.datatype);
  if (!set) {
    const have = layout.layers.map((l) => `${l.layer}/${l.datatype}`).join(', ') || 'none';
    throw new UsageError(`${file}: layer ${spec.layer}/${spec.datatype} not found (layers present: ${have})`);
  }
  return set;
}

export async function readLayout(file: string, top: string | undefined): Promise<FlatLayout> {
  let layout: FlatLayout;
  try {
    layout = await readLayoutFile(file, top !== undefined ? { topCell: top } : {});
  } catch (err) {
    throw new Error(`${file}: ${err instanceof Error ? err.message : String(err)}`);
  }
  printLayoutWarnings(file, layout.warnings);
  return layout;
}

function choice<T extends string>(name: string, value: string | undefined, allowed: readonly T[], fallback: T): T {
  if (value === undefined) return fallback;
  if (!(allowed as readonly string[]).includes(value)) throw new UsageError(`--${name} must be one of ${allowed.join(', ')}, got "${value}"`);
  return value as T;
}

function pairOption(name: string, value: string | undefined): [number, number] | undefined {
  if (value === undefined) return undefined;
  const parts = value.split(',').map((v) => Number(v.trim()));
  if (parts.length !== 2 || !parts.every(Number.isFinite)) throw new UsageError(`--${name} must look like X,Y in µm, got "${value}"`);
  return parts as [number, number];
}

const finiteOrNull = (v: number) => (Number.isFinite(v) ? v : null);

export async function run(argv: string[]): Promise<number> {
  return runCommand('density', async () => {
    const { values: o, positionals } = parseCommandArgs(argv, {
      layer: { type: 'string' },
      'window-um': { type: 'string' },
      'step-um': { type: 'string' },
      'pixel-um': { type: 'string' },
      'origin-um': { type: 'string' },
      edge: { type: 'string' },
      polarity: { type: 'string' },
      'region-layer': { type: 'string' },
      top: { type: 'string' },
      json: { type: 'boolean' },
      help: { type: 'boolean', short: 'h' },
    });
    if (o.help) {
      console.log(HELP);
      return 0;
    }
    const file = positionals[0];
    if (!file || positionals.length > 1) throw new UsageError('expected one FILE argument (see --help)');
    const layerSpec = layerOption(o.layer);
    const W = numberOption('window-um', o['window-um']);
    const S = numberOption('step-um', o['step-um']);
    if (W <= 0 || S <= 0) throw new UsageError('--window-um and --step-um must be positive');
    const edge = choice('edge', o.edge, ['full', 'clipped'] as const, 'full');
    const polarity: Polarity = choice('polarity', o.polarity, ['clear', 'dark'] as const, 'clear');
    const origin = pairOption('origin-um', o['origin-um']);
    const regionSpec = o['region-layer'] !== undefined ? layerOption(o['region-layer']) : undefined;
    if (regionSpec && polarity === 'dark') throw new UsageError('--region-layer with --polarity dark is not supported; use the layout bounding box');

    const layout = await readLayout(file, o.top);
    const set = findLayer(layout, layerSpec, file);
    const dbu = layout.dbuUm;
    const regionSet = regionSpec ? findLayer(layout, regionSpec, file) : undefined;
    const regionBox: Box | null = regionSet ? setBbox(regionSet) : layout.bboxDbu;
    if (!regionBox || regionBox[2] <= regionBox[0] || regionBox[3] <= regionBox[1]) throw new UsageError(`${file}: the reference region is empty`);
    const regionUm: Box = [regionBox[0] * dbu, regionBox[1] * dbu, regionBox[2] * dbu, regionBox[3] * dbu];
    const extent: [number, number] = [regionUm[2] - regionUm[0], regionUm[3] - regionUm[1]];

    // Pixel: a divisor of W, S and the origin offset, so every window edge falls on a pixel edge (exact sums).
    let g = lengthGcd(W, S);
    if (origin) for (const d of [origin[0] - regionUm[0], origin[1] - regionUm[1]]) if (Math.abs(d) > 1e-9) g = lengthGcd(g, Math.abs(d));
    let pixelUm: number, pixelNote: string;
    if (o['pixel-um'] !== undefined) {
      pixelUm = numberOption('pixel-um', o['pixel-um']);
      if (pixelUm <= 0) throw new UsageError('--pixel-um must be positive');
      pixelNote = `pixel ${pixelUm} µm as requested`;
    } else {
      const a = alignedPixelUm(g, g, extent);
      pixelUm = a.pixelUm;
      pixelNote = a.aligned
        ? `pixel ${pixelUm} µm, chosen to divide W, S${origin ? ' and the origin offset' : ''} (gcd ${g} µm) so window sums are exact`
        : `pixel ${pixelUm} µm (the aligned size ${g} µm would exceed 16 M pixels); window edges inside pixels are interpolated`;
    }
    const grid = gridForBox(regionBox, dbu, pixelUm);
    if (grid.nx * grid.ny > 64e6) throw new UsageError(`--pixel-um ${pixelUm} gives ${grid.nx}×${grid.ny} pixels; choose a larger pixel`);
    const coverage = coverageRaster64(set, dbu, grid, { polarity, regionDbu: polarity === 'dark' ? regionBox : undefined });
    const regionCoverage = regionSet ? coverageRaster64(regionSet, dbu, grid) : undefined;
    const wd = windowDensity(coverage, grid, {
      windowUm: W,
      stepUm: S,
      originUm: origin,
      edge,
      regionUm,
      regionCoverage,
      regionName: regionSpec ? `boundary layer ${regionSpec.layer}/${regionSpec.datatype}` : 'the layout bounding box',
    });
    const rows: (number | null)[][] = [];
    for (let j = 0; j < wd.ny; j++) rows.push(Array.from(wd.values.subarray(j * wd.nx, (j + 1) * wd.nx), finiteOrNull));
    const polarityText = polarity === 'clear' ? 'clear: drawn shapes are open' : 'dark: the region minus the drawn shapes is open';
    if (o.json) {
      console.log(
        JSON.stringify({
          file,
          layer: `${layerSpec.layer}/${layerSpec.datatype}`,
          windowUm: wd.windowUm,
          stepUm: wd.stepUm,
          originUm: wd.originUm,
          nx: wd.nx,
          ny: wd.ny,
          values: rows,
          min: finiteOrNull(wd.min),
          max: finiteOrNull(wd.max),
          mean: finiteOrNull(wd.mean),
          globalDensity: finiteOrNull(wd.globalDensity),
          minAt: wd.minAt,
          maxAt: wd.maxAt,
          maxGradient: wd.maxGradient,
          pixelUm,
          method: { ...wd.method, polarity: polarityText, raster: pixelNote },
          caution: CAUTION,
        }),
      );
      return 0;
    }
    const f = (v: number) => (Number.isFinite(v) ? v.toFixed(4) : '-');
    const out = [
      `${file}  layer ${layerSpec.layer}/${layerSpec.datatype}  windows ${W} µm step ${S} µm  (${wd.nx} × ${wd.ny})`,
      `min ${f(wd.min)} at window (${wd.minAt.i}, ${wd.minAt.j})   max ${f(wd.max)} at (${wd.maxAt.i}, ${wd.maxAt.j})   mean ${f(wd.mean)}   global ${f(wd.globalDensity)}`,
      `largest difference between neighbouring windows ${f(wd.maxGradient.value)}`,
      '',
      'method',
      `  origin       ${wd.method.origin}`,
      `  denominator  ${wd.method.denominator}`,
      `  edges        ${wd.method.edgePolicy}`,
      `  polarity     ${polarityText}`,
      `  raster       ${pixelNote}`,
    ];
    if (wd.nx > 0 && wd.nx <= 24 && wd.ny <= 48) {
      out.push('', 'values (top row = highest y):');
      for (let j = wd.ny - 1; j >= 0; j--) out.push('  ' + Array.from(wd.values.subarray(j * wd.nx, (j + 1) * wd.nx), (v) => f(v).padStart(6)).join(' '));
    } else if (wd.nx > 0) out.push('', '(use --json for all window values)');
    else out.push('', 'no window fits: the region is smaller than one window');
    out.push('', CAUTION);
    console.log(out.join('\n'));
    return 0;
  });
}
