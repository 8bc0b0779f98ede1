/**
 * `npm run --silent cli -- inspect FILE [--json] [--top CELL]`: what a layout file holds after flattening —
 * format, units, top cell, cell count, and per layer/datatype the polygon count, union area (µm²) and bbox (µm).
 * Exit 0 on success, 2 on unreadable input or bad usage (one line on stderr, no stack trace).
 */
import { parseCommandArgs, printLayoutWarnings, runCommand, UsageError } from './args';
import { readLayoutFile } from '../layout/read';
import { layerSummary, type LayerSummaryRow } from '../geometry/union-area';
import type { LayoutWarning } from '../layout/errors';
import type { FlatLayout } from '../layout/types';

const HELP = `usage: npm run --silent cli -- inspect FILE [--json] [--top CELL]

Reads a GDSII stream or a trenchant-polygons CSV, flattens it and prints per layer/datatype
the polygon count, the union area in µm² and the bounding box in µm.
  --json        one JSON object instead of the table
  --top CELL    flatten this cell instead of the automatically chosen top cell`;

export interface InspectReport {
  format: FlatLayout['format'];
  libraryName: string;
  topCell: string;
  dbuUm: number;
  userUnitUm: number;
  cells: number;
  labels: number;
  layers: LayerSummaryRow[];
  /** Repairs the reader made (also printed on stderr), e.g. unclosed boundaries with their byte offsets. */
  warnings: LayoutWarning[];
}

export function inspectReport(layout: FlatLayout): InspectReport {
  return {
    format: layout.format,
    libraryName: layout.libraryName,
    topCell: layout.topCell,
    dbuUm: layout.dbuUm,
    userUnitUm: layout.userUnitUm,
    cells: layout.cellCount,
    labels: layout.labels.length,
    layers: layerSummary(layout),
    warnings: layout.warnings ?? [],
  };
}

const num = (v: number, digits = 6) => Number(v.toPrecision(digits)).toString();

function table(r: InspectReport, file: string): string {
  const lines = [
    `file         ${file}`,
    `format       ${r.format === 'gdsii' ? 'GDSII stream' : 'trenchant-polygons CSV'}${r.libraryName ? ` (library "${r.libraryName}")` : ''}`,
    `user unit    ${num(r.userUnitUm)} µm`,
    `database     ${num(r.dbuUm)} µm per unit`,
    `top cell     ${r.topCell || '(flat file, no cells)'}`,
    `cells        ${r.cells}`,
    `labels       ${r.labels}`,
    '',
  ];
  const head = ['layer/dt', 'polygons', 'area µm²', 'bbox µm (x0, y0, x1, y1)'];
  const rows = r.layers.map((l) => [
    `${l.layer}/${l.datatype}`,
    String(l.polygons),
    num(l.areaUm2, 10),
    l.bboxUm ? l.bboxUm.map((v) => num(v, 10)).join(', ') : '-',
  ]);
  const widths = head.map((h, i) => Math.max(h.length, ...rows.map((row) => (row[i] as string).length)));
  const fmt = (row: string[]) => row.map((c, i) => (i === row.length - 1 ? c : i === 0 ? c.padEnd(widths[i] as number) : c.padStart(widths[i] as number))).join('  ');
  lines.push(fmt(head), ...rows.map(fmt));
  if (r.layers.length === 0) lines.push('(no polygons)');
  return lines.join('\n');
}

export async function run(argv: string[]): Promise<number> {
  return runCommand('inspect', async () => {
    const { values, positionals } = parseCommandArgs(argv, {
      json: { type: 'boolean' },
      top: { type: 'string' },
      help: { type: 'boolean', short: 'h' },
    });
    if (values.help) {
      console.log(HELP);
      return 0;
    }
    const file = positionals[0];
    if (!file || positionals.length > 1) throw new UsageError(`expected one FILE argument\n${HELP}`.split('\n')[0] as string);
    let layout: FlatLayout;
    try {
      layout = await readLayoutFile(file, values.top !== undefined ? { topCell: values.top } : {});
    } catch (err) {
      const message = err instanceof Error ? err.message : String(err);
      throw new Error(message.includes(file) ? message : `${file}: ${message}`);
    }
    printLayoutWarnings(file, layout.warnings);
    const report = inspectReport(layout);
    console.log(values.json ? JSON.stringify(report) : table(report, file));
    return 0;
  });
}
