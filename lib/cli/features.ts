/**
 * `npm run --silent cli -- features FILE --layer L/D [--json]`: the openings of one layer with kind, area and
 * widths. Exit 0 on success, 2 on bad input or usage (one line on stderr).
 */
import { layerOption, numberOption, parseCommandArgs, runCommand, UsageError } from './args';
import { findLayer, readLayout } from './density';
import { openRegions, type Polarity } from '../geometry';
import { featuresInThreads } from '../geometry/parallel-features';

const HELP = `usage: npm run --silent cli -- features FILE --layer L/D [--json] [options]

Connected openings of one layer after union, with kind, area, perimeter and widths (µm).
  --json                 one JSON object { features: [...] }
  --polarity clear|dark  clear: drawn shapes are open (default); dark: the layout bbox minus the shapes is open
  --open-field-um W      widest inscribed disk at or above which an opening is an open field (default 100)
  --trench-aspect A      length/width at or above which an opening is a trench (default 3)
  --top CELL             flatten this cell instead of the automatically chosen top cell

minWidth: the width that governs the etch (trench width, hole diameter, narrower arm);
maxWidth: diameter of the largest inscribed disk. Drawn dimensions, not etched ones (no bias or CD loss).`;

const round = (v: number) => Number(v.toPrecision(10));

export async function run(argv: string[]): Promise<number> {
  return runCommand('features', async () => {
    const { values: o, positionals } = parseCommandArgs(argv, {
      layer: { type: 'string' },
      polarity: { type: 'string' },
      'open-field-um': { type: 'string' },
      'trench-aspect': { type: 'string' },
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
    if (o.polarity !== undefined && o.polarity !== 'clear' && o.polarity !== 'dark') throw new UsageError(`--polarity must be clear or dark, got "${o.polarity}"`);
    const polarity = (o.polarity ?? 'clear') as Polarity;
    const openFieldWidthUm = numberOption('open-field-um', o['open-field-um'], 100);
    const trenchAspect = numberOption('trench-aspect', o['trench-aspect'], 3);
    if (openFieldWidthUm <= 0 || trenchAspect <= 0) throw new UsageError('--open-field-um and --trench-aspect must be positive');
    const layout = await readLayout(file, o.top);
    const set = findLayer(layout, layerSpec, file);
    const regionDbu = polarity === 'dark' ? (layout.bboxDbu ?? undefined) : undefined;
    const features = featuresInThreads(openRegions(set, layout.dbuUm, { polarity, regionDbu }), { polarity, regionDbu, openFieldWidthUm, trenchAspect });
    const rows = features.map((f) => ({
      id: f.id,
      kind: f.kind,
      centroidUm: f.centroidUm.map(round),
      bboxUm: f.bboxUm.map(round),
      areaUm2: round(f.areaUm2),
      perimeterUm: round(f.perimeterUm),
      minWidthUm: round(f.minWidthUm),
      maxWidthUm: round(f.maxWidthUm),
      lengthUm: round(f.lengthUm),
      widthExact: f.widthExact,
    }));
    if (o.json) {
      console.log(JSON.stringify({ file, layer: `${layerSpec.layer}/${layerSpec.datatype}`, polarity, count: rows.length, features: rows }));
      return 0;
    }
    const head = ['id', 'kind', 'centroid µm', 'area µm²', 'min width', 'max width', 'length'];
    const body = rows.map((r) => [String(r.id), r.kind, `${r.centroidUm[0]}, ${r.centroidUm[1]}`, String(r.areaUm2), `${r.minWidthUm}${r.widthExact ? '' : '*'}`, String(r.maxWidthUm), String(r.lengthUm)]);
    const widths = head.map((h, i) => Math.max(h.length, ...body.map((b) => (b[i] as string).length)));
    const fmt = (cells: string[]) => cells.map((c, i) => c.padEnd(widths[i] as number)).join('  ');
    console.log([`${file}  layer ${layerSpec.layer}/${layerSpec.datatype}  ${rows.length} openings (${polarity} polarity)`, '', fmt(head), ...body.map(fmt), '', '* width from a fine lattice (within 1 %), others exact. Drawn dimensions; validate against measured CDs.'].join('\n'));
    return 0;
  });
}
