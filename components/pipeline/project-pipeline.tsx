import { can, type TeamRole } from '@/lib/auth/permissions';
import { ProjectPipelineClient } from './project-pipeline-client';
import { QueryProvider } from './query-provider';

/** Project page section: layout revisions and analyses (fetched by the browser from the API). */
export function ProjectPipeline({ projectId, role }: { projectId: string; role: TeamRole }) {
  return (
    <QueryProvider>
      <ProjectPipelineClient projectId={projectId} canUpload={can(role, 'layout.upload')} canAnalyse={can(role, 'analysis.create')} />
    </QueryProvider>
  );
}
