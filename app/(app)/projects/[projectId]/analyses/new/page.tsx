import type { Metadata } from 'next';
import Link from 'next/link';
import { ForbiddenNotice } from '@/components/app/forbidden-notice';
import { NewAnalysisForm } from '@/components/pipeline/new-analysis-form';
import { Card, PageTitle } from '@/components/ui/card';
import { getDb } from '@/db/client';
import { can, rolesAllowedText } from '@/lib/auth/permissions';
import { listBuiltinModels } from '@/lib/jobs/models';
import { defaultModelOption, projectEtchKind } from '@/lib/models/defaults';
import { listRuleSets } from '@/lib/models/rule-sets';
import { listPublishedChoices } from '@/lib/models/versions';
import { lastUsedModelId } from '@/lib/models/analysis-models';
import { projectForPage } from '@/lib/jobs/page-access';
import { listProjectLayouts } from '@/lib/uploads/layouts';

export const metadata: Metadata = { title: 'New analysis' };

export default async function NewAnalysisPage({ params, searchParams }: { params: Promise<{ projectId: string }>; searchParams: Promise<{ revision?: string }> }) {
  const { project, role } = await projectForPage((await params).projectId);
  if (!can(role, 'analysis.create')) return <ForbiddenNotice message={`Starting an analysis needs the ${rolesAllowedText('analysis.create')} role.`} />;
  const wanted = (await searchParams).revision;
  const revisions = listProjectLayouts(getDb(), project.id).flatMap((l) => l.revisions.map((r) => ({ id: r.id, label: `${l.name} r${r.revision} (${r.originalName})`, layers: r.layers, bboxUm: r.bboxUm })));
  const db = getDb();
  const published = listPublishedChoices(db, project.teamId);
  const models = [
    ...published.map((m) => ({ id: m.versionId, name: m.name, version: `v${m.number}`, description: m.description, targetDepthUm: m.targetDepthUm, toleranceUm: m.toleranceUm, maxAspectRatio: m.maxAspectRatio, loadingLengthUm: m.loadingLengthUm, group: 'published' as const, calibrationDate: m.calibrationDate })),
    ...listBuiltinModels().map((m) => ({
      id: m.id,
      name: m.name,
      version: m.version,
      description: m.description,
      targetDepthUm: m.model.etch.targetDepthUm,
      toleranceUm: m.model.etch.toleranceUm,
      maxAspectRatio: m.model.etch.maxAspectRatio,
      loadingLengthUm: m.model.loading.lengthUm,
      group: 'sample' as const,
    })),
  ];
  const etchKind = projectEtchKind(project);
  const lastUsed = lastUsedModelId(db, project.id);
  const defaultModelId = defaultModelOption(
    [
      ...published.map((m) => ({ id: m.versionId, modelId: m.modelId, featureKind: m.featureKind, mode: m.mode, calibrated: m.calibrationDate !== null, latest: m.latest })),
      ...listBuiltinModels().map((m) => ({ id: m.id, modelId: null, featureKind: (m.model.mode === 'cyclic' ? 'hole' : 'trench') as 'trench' | 'hole', mode: m.model.mode, calibrated: false, latest: true })),
    ],
    etchKind,
    lastUsed,
  );
  const defaultModelReason = lastUsed && published.some((m) => m.versionId === defaultModelId && m.modelId === lastUsed) ? 'The newest version of the model this project used last.' : `Suggested for a ${etchKind === 'hole' ? 'hole / via' : 'trench'} project.`;
  const ruleSets = listRuleSets(db, project.teamId).map((r) => ({ id: r.id, name: r.name, description: r.description, isDefault: r.isDefault, rules: r.rules }));
  return (
    <div className="max-w-3xl">
      <PageTitle kicker={<Link href={`/projects/${project.id}`} className="hover:underline">{project.name}</Link>} title="New analysis" />
      <Card className="p-6">
        {revisions.length === 0 ? (
          <p className="text-sm text-ink-500">
            Upload a layout first. <Link href={`/projects/${project.id}/upload`} className="text-copper-600 hover:underline">Upload a layout</Link>
          </p>
        ) : (
          <NewAnalysisForm projectId={project.id} revisions={revisions} initialRevisionId={revisions.some((r) => r.id === wanted) ? (wanted as string) : (revisions[0]?.id ?? '')} models={models} defaultModelId={defaultModelId} defaultModelReason={defaultModelReason} ruleSets={ruleSets} />
        )}
      </Card>
    </div>
  );
}
