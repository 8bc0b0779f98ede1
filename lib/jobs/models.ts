/**
 * Process models offered when starting an analysis. There is no model library table yet, so the built-in choices
 * are the invented demo models shipped in samples/models/*.json (id = file name without .json); a user may also
 * send a model document of their own, which is validated the same way.
 */
import { readdirSync, readFileSync } from 'node:fs';
import path from 'node:path';
import { parseProcessModel, type ProcessModel } from '@/lib/etch';

export type BuiltinModel = { id: string; name: string; version: string; description: string; model: ProcessModel };

function modelsDir(): string {
  return process.env.TRENCHANT_MODELS_DIR ?? path.join(/*turbopackIgnore: true*/ process.cwd(), 'samples', 'models');
}

/** Built-in models, sorted by id; files that do not validate are skipped (and logged). */
export function listBuiltinModels(): BuiltinModel[] {
  let files: string[];
  try {
    files = readdirSync(/*turbopackIgnore: true*/ modelsDir()).filter((f) => f.endsWith('.json')).sort();
  } catch {
    return [];
  }
  const out: BuiltinModel[] = [];
  for (const file of files) {
    try {
      const parsed = parseProcessModel(JSON.parse(readFileSync(/*turbopackIgnore: true*/ path.join(/*turbopackIgnore: true*/ modelsDir(), file), 'utf8')));
      if (!parsed.ok) {
        console.error(`[trenchant] built-in model ${file} does not validate: ${parsed.issues.map((i) => `${i.path}: ${i.message}`).join('; ')}`);
        continue;
      }
      const m = parsed.model as ProcessModel & { name?: string; version?: string; description?: string };
      out.push({ id: file.replace(/\.json$/, ''), name: m.name ?? file, version: m.version ?? 'unversioned', description: m.description ?? '', model: parsed.model });
    } catch (err) {
      console.error(`[trenchant] built-in model ${file} unreadable:`, err);
    }
  }
  return out;
}

export function findBuiltinModel(id: string): BuiltinModel | null {
  return listBuiltinModels().find((m) => m.id === id) ?? null;
}
