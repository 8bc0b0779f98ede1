/**
 * The method block printed with every result: the exact choices behind the numbers (rule documents often give
 * limits without a method, and density changes with origin, denominator and edge policy), each line pointing to
 * the Methods section that explains it.
 */
export interface MethodBlockLine {
  label: string;
  value: string;
  /** Id of the Methods section that explains this line. */
  sectionId: string;
}

export interface MethodBlockInput {
  etchLayers: string[];
  polarity: 'clear' | 'dark';
  dieBboxUm: [number, number, number, number];
  pixelUm: number;
  pixelAuto: boolean;
  windows: { windowUm: number; stepUm: number; originUm: [number, number]; method: { origin: string; denominator: string; edgePolicy: string } }[];
  kernel: { kind: string; lengthUm: number; outside: string; fromModel: boolean };
  model: { name: string; version: string; calibrationDate: string | null };
  globalDensity: number;
}

const n = (v: number) => String(Number(v.toPrecision(6)));

export function methodBlock(x: MethodBlockInput): MethodBlockLine[] {
  const [x0, y0, x1, y1] = x.dieBboxUm;
  const lines: MethodBlockLine[] = [
    { label: 'Etch layers', value: `${x.etchLayers.join(' + ')} (${x.polarity === 'clear' ? 'clear: drawn shapes are the openings' : 'dark: everything in the die except the drawn shapes is open'})`, sectionId: 'open-area' },
    { label: 'Die extent', value: `(${n(x0)}, ${n(y0)}) to (${n(x1)}, ${n(y1)}) µm, the layout's bounding box over all layers`, sectionId: 'open-area' },
    { label: 'Pixel size', value: `${n(x.pixelUm)} µm${x.pixelAuto ? ' (automatic)' : ''}`, sectionId: 'open-area' },
    { label: 'Global density', value: `${n(x.globalDensity * 100)} % (open area / die area; also the exposed fraction given to the model)`, sectionId: 'density-windows' },
  ];
  for (const w of x.windows) {
    lines.push({
      label: `Windows ${n(w.windowUm)}/${n(w.stepUm)} µm`,
      value: `origin ${w.method.origin}; denominator ${w.method.denominator}; edge ${w.method.edgePolicy}`,
      sectionId: 'density-windows',
    });
  }
  lines.push(
    { label: 'Effective density', value: `${x.kernel.kind} kernel, L = ${n(x.kernel.lengthUm)} µm${x.kernel.fromModel ? ' (shape and length from the process model)' : ''}; outside the die: ${x.kernel.outside}`, sectionId: 'effective-density' },
    { label: 'Opening width', value: 'smallest width of each connected opening (trench width, hole diameter or side)', sectionId: 'features-and-width' },
    { label: 'Process model', value: `${x.model.name} version ${x.model.version}${x.model.calibrationDate ? `, calibrated ${x.model.calibrationDate}` : ', no calibration date recorded'}`, sectionId: 'etch-model' },
  );
  return lines;
}

/** Aligned "label  value" lines; values longer than `wrap` characters continue on indented lines at "; ". */
export function formatMethodBlock(lines: MethodBlockLine[], wrap = 100): string {
  const width = Math.max(...lines.map((l) => l.label.length));
  const out: string[] = [];
  for (const l of lines) {
    const parts = l.value.length > wrap ? l.value.split('; ') : [l.value];
    parts.forEach((p, k) => out.push(`${(k === 0 ? l.label : '').padEnd(width)}  ${k === 0 ? '' : '  '}${p}`));
  }
  return out.join('\n');
}
