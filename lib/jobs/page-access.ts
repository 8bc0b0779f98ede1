import 'server-only';
import { notFound } from 'next/navigation';
import { getDb } from '@/db/client';
import { requireProjectPermission } from '@/lib/auth/guard';
import { idParam } from '@/lib/data/schemas';
import { isApiError } from '@/lib/http/errors';
import { analysisProjectId } from './analyses';

// Pages: the same project check as the API (session cookie), with unknown or foreign ids shown as 404.

export async function projectForPage(rawProjectId: string) {
  const parsed = idParam.safeParse(rawProjectId);
  if (!parsed.success) notFound();
  return requireProjectPermission(parsed.data, 'project.read').catch((error: unknown) => {
    if (isApiError(error) && error.code === 'not_found') notFound();
    throw error;
  });
}

export async function analysisForPage(rawAnalysisId: string) {
  const parsed = idParam.safeParse(rawAnalysisId);
  if (!parsed.success) notFound();
  let projectId: string;
  try {
    projectId = analysisProjectId(getDb(), parsed.data);
  } catch {
    notFound();
  }
  return { analysisId: parsed.data, ...(await projectForPage(projectId)) };
}
