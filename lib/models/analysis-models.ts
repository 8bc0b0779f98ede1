/** Which model version analyses used: the project's last one (for the form default). */
import { and, desc, eq, isNotNull } from 'drizzle-orm';
import type { Db } from '@/db/client';
import { analyses, processModelVersions } from '@/db/schema';

/** Model id of the newest analysis in the project that used a published team version; null when none did. */
export function lastUsedModelId(db: Db, projectId: string): string | null {
  const row = db
    .select({ modelId: processModelVersions.modelId })
    .from(analyses)
    .innerJoin(processModelVersions, eq(processModelVersions.id, analyses.modelVersionId))
    .where(and(eq(analyses.projectId, projectId), isNotNull(analyses.modelVersionId)))
    .orderBy(desc(analyses.createdAt))
    .get();
  return row?.modelId ?? null;
}
