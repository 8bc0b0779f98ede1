/** A process model from samples/models, parsed and validated (tests that run the pipeline on the samples). */
import { readFileSync } from 'node:fs';
import { parseProcessModel, type ProcessModel } from '@/lib/etch';

export function sampleModel(name: string): ProcessModel {
  const r = parseProcessModel(JSON.parse(readFileSync(new URL(`../../samples/models/${name}`, import.meta.url), 'utf8')));
  if (!r.ok) throw new Error(`sample model ${name} is invalid`);
  return r.model;
}
