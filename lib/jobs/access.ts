import 'server-only';
import { getDb } from '@/db/client';
import type { TeamAction } from '@/lib/auth/permissions';
import { authenticateRequest, requireProjectAccess } from '@/lib/auth/request-access';
import { layoutProjectId } from '@/lib/uploads/layouts';
import { analysisProjectId } from './analyses';

// Access checks for resources reached by their own id: authenticate first (so an anonymous caller learns
// nothing about which ids exist), then find the project and apply the same project check as everywhere else.

export async function requireAnalysisAccess(request: Request, analysisId: string, action: TeamAction | 'project.read') {
  await authenticateRequest(request);
  return requireProjectAccess(request, analysisProjectId(getDb(), analysisId), action);
}

export async function requireLayoutAccess(request: Request, layoutId: string, action: TeamAction | 'project.read') {
  await authenticateRequest(request);
  return requireProjectAccess(request, layoutProjectId(getDb(), layoutId), action);
}
