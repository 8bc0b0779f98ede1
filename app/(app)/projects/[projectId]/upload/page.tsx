import type { Metadata } from 'next';
import Link from 'next/link';
import { ForbiddenNotice } from '@/components/app/forbidden-notice';
import { UploadForm } from '@/components/pipeline/upload-form';
import { Card, PageTitle } from '@/components/ui/card';
import { can, rolesAllowedText } from '@/lib/auth/permissions';
import { projectForPage } from '@/lib/jobs/page-access';
import { formatBytes, maxUploadBytes } from '@/lib/uploads/receive';

export const metadata: Metadata = { title: 'Upload layout' };

export default async function UploadPage({ params }: { params: Promise<{ projectId: string }> }) {
  const { project, role } = await projectForPage((await params).projectId);
  if (!can(role, 'layout.upload')) return <ForbiddenNotice message={`Uploading layouts needs the ${rolesAllowedText('layout.upload')} role.`} />;
  const limit = maxUploadBytes();
  return (
    <div className="max-w-2xl">
      <PageTitle kicker={<Link href={`/projects/${project.id}`} className="hover:underline">{project.name}</Link>} title="Upload a layout" />
      <Card className="p-6">
        <UploadForm projectId={project.id} maxBytes={limit} maxLabel={formatBytes(limit)} />
      </Card>
    </div>
  );
}
