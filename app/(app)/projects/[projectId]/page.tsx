import type { Metadata } from 'next';
import Link from 'next/link';
import { notFound } from 'next/navigation';
import { ProjectPipeline } from '@/components/pipeline/project-pipeline';
import { ProjectSignoffs } from '@/components/findings/project-signoffs';
import { Card, PageTitle } from '@/components/ui/card';
import { RoleBadge } from '@/components/ui/role-badge';
import { getProject } from '@/lib/data/projects';
import { idParam } from '@/lib/data/schemas';
import { isApiError } from '@/lib/http/errors';

export const metadata: Metadata = { title: 'Project' };

export default async function ProjectPage({ params }: { params: Promise<{ projectId: string }> }) {
  const parsed = idParam.safeParse((await params).projectId);
  if (!parsed.success) notFound();
  const project = await getProject(parsed.data).catch((error: unknown) => {
    if (isApiError(error) && error.code === 'not_found') notFound();
    throw error;
  });
  return (
    <>
      <PageTitle kicker={<Link href="/projects" className="hover:underline">{project.teamName}</Link>} title={project.name} actions={<RoleBadge role={project.myRole} />} />
      <Card className="p-6">
        {project.description ? <p className="text-sm leading-relaxed text-ink-700">{project.description}</p> : null}
        <dl className="mt-4 grid grid-cols-[max-content_1fr] gap-x-6 gap-y-1 font-mono text-xs text-ink-500">
          <dt>created</dt>
          <dd>{new Date(project.createdAt).toISOString().slice(0, 10)}{project.createdByName ? ` by ${project.createdByName}` : ''}</dd>
          <dt>project id</dt>
          <dd>{project.id}</dd>
        </dl>
      </Card>
      <ProjectPipeline projectId={project.id} role={project.myRole} />
      <ProjectSignoffs projectId={project.id} />
    </>
  );
}
