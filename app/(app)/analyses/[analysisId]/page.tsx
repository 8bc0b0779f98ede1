import type { Metadata } from 'next';
import Link from 'next/link';
import { AnalysisView } from '@/components/pipeline/analysis-view';
import { PageTitle } from '@/components/ui/card';
import { getDb } from '@/db/client';
import { can } from '@/lib/auth/permissions';
import { getAnalysisView } from '@/lib/jobs/analyses';
import { analysisForPage } from '@/lib/jobs/page-access';

export const metadata: Metadata = { title: 'Analysis' };

export default async function AnalysisPage({ params }: { params: Promise<{ analysisId: string }> }) {
  const { analysisId, project, role } = await analysisForPage((await params).analysisId);
  const a = getAnalysisView(getDb(), analysisId);
  return (
    <>
      <PageTitle kicker={<Link href={`/projects/${project.id}`} className="hover:underline">{project.name}</Link>} title={`${a.revision.layoutName} r${a.revision.revision} · ${a.model.name}`} />
      <AnalysisView analysisId={analysisId} initial={a} canCancel={can(role, 'analysis.create')} />
    </>
  );
}
