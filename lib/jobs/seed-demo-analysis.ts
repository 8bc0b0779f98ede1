/**
 * Gives the seeded demo project ("Kestrel-3 gyroscope die") a layout revision and a queued analysis with the demo
 * deep-trench model, so a new user finds finished results (the job runs in the worker pool right after start-up;
 * it takes a second or two). Runs only when the demo project exists and has no layout yet.
 */
import { createHash, randomUUID } from 'node:crypto';
import { count, eq } from 'drizzle-orm';
import type { Db } from '@/db/client';
import { analyses, layoutRevisions, layouts, projects } from '@/db/schema';
import { DEMO_PROJECTS, DEMO_USERS } from '@/lib/data/demo';
import { readLayoutBytes } from '@/lib/layout/read';
import { storage } from '@/lib/storage';
import { layerTableOf } from '@/lib/uploads/layouts';
import { createAnalysis } from './analyses';
import { DEMO_ETCH_LAYER, DEMO_LAYOUT_FILE_NAME, demoLayoutGdsii } from './demo-layout';
import { revisionRelPath } from './paths';

const DEMO_MODEL_ID = 'deep-trench-continuous';

/** Settings of the demo analysis: the rule-manual style windows plus limits that make the demo's flags visible. */
export const DEMO_SETTINGS = {
  etchLayers: [DEMO_ETCH_LAYER],
  polarity: 'clear',
  densityWindows: [
    { windowUm: 100, stepUm: 50 },
    { windowUm: 500, stepUm: 100 },
  ],
  limits: { minDensity: null, maxDensity: 0.6, maxGradient: 0.3, minWidthUm: 2.5 },
} as const;

export async function seedDemoAnalysis(db: Db): Promise<{ seeded: boolean; analysisId?: string }> {
  const demo = DEMO_PROJECTS[0];
  const designer = DEMO_USERS.find((u) => u.role === 'designer');
  if (!demo || !designer) return { seeded: false };
  if (!db.select({ id: projects.id }).from(projects).where(eq(projects.id, demo.id)).get()) return { seeded: false };
  const existing = db.select({ n: count() }).from(layouts).where(eq(layouts.projectId, demo.id)).get()?.n ?? 0;
  if (existing > 0) return { seeded: false };

  const bytes = demoLayoutGdsii();
  const layout = await readLayoutBytes(bytes);
  const revisionId = randomUUID();
  const rel = revisionRelPath(demo.id, revisionId, 'gdsii');
  await storage().putBytes(rel, bytes);
  const now = new Date();
  const layoutId = randomUUID();
  db.transaction((tx) => {
    tx.insert(layouts).values({ id: layoutId, projectId: demo.id, name: 'Kestrel-3 DRIE', createdBy: designer.id, createdAt: now }).run();
    tx.insert(layoutRevisions)
      .values({
        id: revisionId,
        layoutId,
        revision: 1,
        uploadedBy: designer.id,
        uploadedAt: now,
        originalName: DEMO_LAYOUT_FILE_NAME,
        sha256: createHash('sha256').update(bytes).digest('hex'),
        sizeBytes: bytes.length,
        format: 'gdsii',
        storedPath: rel,
        layerTable: layerTableOf(layout),
        topCell: layout.topCell,
        libraryName: layout.libraryName,
        dbuUm: layout.dbuUm,
        bboxDbu: layout.bboxDbu ? ([...layout.bboxDbu] as [number, number, number, number]) : null,
        polygonCount: layout.layers.reduce((n, s) => n + s.count, 0),
        note: 'Demo layout (invented): comb drives, springs, release ring and open fields on the deep-trench layer 1/0.',
      })
      .run();
  });
  const analysis = createAnalysis(db, {
    projectId: demo.id,
    userId: designer.id,
    body: { revisionId, settings: structuredClone(DEMO_SETTINGS) as unknown as Record<string, unknown>, modelId: DEMO_MODEL_ID },
  });
  return { seeded: true, analysisId: analysis.id };
}

/** True when the demo analysis has been created (used by tests). */
export function demoAnalysisCount(db: Db): number {
  return db.select({ n: count() }).from(analyses).where(eq(analyses.projectId, DEMO_PROJECTS[0]?.id ?? '')).get()?.n ?? 0;
}
