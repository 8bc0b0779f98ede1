/**
 * `npm run --silent cli -- depth --model MODEL.json --width-um W [--kind trench|hole] [--density RHO]
 *   [--exposed-fraction A] [--json]`
 * Predicted depth of one opening under a process model at the model's etch time, the aspect ratio reached, the ARDE
 * factor there and the time to reach the target depth. Exit 0 on success, 2 on a bad model file or bad options.
 */
import { readFile } from 'node:fs/promises';
import { ETCH_CAUTION, formatModelIssues, parseProcessModel, predictFeature, type FeaturePrediction, type ProcessModel } from '../etch';
import { numberOption, parseCommandArgs, runCommand, UsageError } from './args';

const HELP = `usage: npm run --silent cli -- depth --model MODEL.json --width-um W [options]

Predicted etch depth of one opening at the model's etch time.
  --model FILE            process model JSON
  --width-um W            opening width (trench) or diameter (hole), µm
  --kind trench|hole      default trench
  --density RHO           effective local open density around the opening, 0–1 (default 0: no local loading)
  --exposed-fraction A    exposed fraction of the wafer, 0–1, for global loading (default 0)
  --json                  one JSON object instead of text`;

async function loadModel(path: string): Promise<ProcessModel> {
  let text: string;
  try {
    text = await readFile(path, 'utf8');
  } catch (err) {
    throw new UsageError(`cannot read model file ${path}: ${(err as NodeJS.ErrnoException).code ?? String(err)}`);
  }
  let json: unknown;
  try {
    json = JSON.parse(text);
  } catch (err) {
    throw new UsageError(`${path}: not valid JSON (${err instanceof Error ? err.message : String(err)})`);
  }
  const parsed = parseProcessModel(json);
  if (!parsed.ok) throw new UsageError(`${path}: invalid process model: ${formatModelIssues(parsed.issues)}`);
  return parsed.model;
}

const f = (v: number, digits = 3) => Number(v.toPrecision(digits + 1)).toString();

function textReport(model: ProcessModel, p: FeaturePrediction, density: number | undefined): string {
  const e = model.etch;
  const status = p.reachesTarget ? (p.marginUm >= 0 ? 'reaches target' : `within tolerance, ${f(-p.marginUm)} µm short`) : `short by ${f(-p.marginUm)} µm`;
  const lines = [
    `model: ${model.name ?? '(unnamed)'}${model.version ? ` (version ${model.version})` : ''}, ${model.mode}, calibrated ${model.calibration?.date ?? 'never'}`,
    `feature: ${p.kind}, width ${f(p.widthUm)} µm, density ${density === undefined ? 'not given' : f(density)}`,
    `depth at ${f(e.timeMin)} min: ${f(p.depthUm)} µm (target ${f(e.targetDepthUm)} ± ${f(e.toleranceUm)} µm: ${status})`,
    `aspect ratio reached: ${f(p.aspectRatio)}`,
    `ARDE factor there: ${f(p.ardeFactor)} (loading factor ${f(p.loadingFactor)})`,
    `time to target: ${p.timeToTargetMin === null ? 'never reached' : `${f(p.timeToTargetMin)} min`}`,
  ];
  if (p.reachedStopLayer) lines.push(`stop layer reached after ${f(p.timeToStopLayerMin ?? 0)} min; over-etch ${f(p.overEtchTimeMin)} min, ${f(p.overEtchUm)} µm into it`);
  if (p.maskRemainingUm !== null) lines.push(`mask remaining: ${f(p.maskRemainingUm)} µm`);
  if (p.cyclic) {
    lines.push(
      `cycles in recipe: ${p.cyclic.cyclesInRecipe}; cycles to target: ${p.cyclic.cyclesToTarget ?? 'never'}; scallop estimate ${f(p.cyclic.scallopTopUm)} µm at top, ${f(p.cyclic.scallopBottomUm)} µm at bottom`,
    );
  }
  for (const w of p.warnings) lines.push(`warning: ${w}`);
  lines.push(`note: ${ETCH_CAUTION}`);
  return lines.join('\n');
}

/** node:util parseArgs messages can span lines (e.g. an option value starting with '-'); keep errors on one line. */
function oneLine<T>(f: () => T): T {
  try {
    return f();
  } catch (err) {
    throw new UsageError((err instanceof Error ? err.message : String(err)).replace(/\s*\n\s*/g, ' '));
  }
}

export async function run(argv: string[]): Promise<number> {
  return runCommand('depth', async () => {
    const { values } = oneLine(() => parseCommandArgs(argv, {
      model: { type: 'string' },
      'width-um': { type: 'string' },
      kind: { type: 'string' },
      density: { type: 'string' },
      'exposed-fraction': { type: 'string' },
      json: { type: 'boolean' },
      help: { type: 'boolean', short: 'h' },
    }));
    if (values.help) {
      console.log(HELP);
      return 0;
    }
    if (!values.model) throw new UsageError('missing --model MODEL.json');
    const widthUm = numberOption('width-um', values['width-um']);
    if (!(widthUm > 0)) throw new UsageError(`--width-um must be > 0, got ${widthUm}`);
    const kind = values.kind ?? 'trench';
    if (kind !== 'trench' && kind !== 'hole') throw new UsageError(`--kind must be trench or hole, got "${kind}"`);
    const density = values.density === undefined ? undefined : numberOption('density', values.density);
    if (density !== undefined && !(density >= 0 && density <= 1)) throw new UsageError(`--density must be in [0, 1], got ${density}`);
    const exposed = values['exposed-fraction'] === undefined ? undefined : numberOption('exposed-fraction', values['exposed-fraction']);
    if (exposed !== undefined && !(exposed >= 0 && exposed <= 1)) throw new UsageError(`--exposed-fraction must be in [0, 1], got ${exposed}`);
    const model = await loadModel(values.model);
    const p = predictFeature(model, { widthUm, kind, effectiveDensity: density, exposedFraction: exposed });
    if (values.json) {
      console.log(
        JSON.stringify({
          model: { name: model.name ?? null, version: model.version ?? null, mode: model.mode, calibrationDate: model.calibration?.date ?? null },
          timeMin: model.etch.timeMin,
          targetDepthUm: model.etch.targetDepthUm,
          toleranceUm: model.etch.toleranceUm,
          effectiveDensity: density ?? null,
          exposedFraction: exposed ?? null,
          ...p,
          caution: ETCH_CAUTION,
        }),
      );
    } else {
      console.log(textReport(model, p, density));
    }
    return 0;
  });
}
