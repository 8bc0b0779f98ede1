import type { Metadata } from 'next';
import { ForbiddenNotice } from '@/components/app/forbidden-notice';
import { Card, PageTitle } from '@/components/ui/card';
import { can, rolesAllowedText } from '@/lib/auth/permissions';
import { requireUser } from '@/lib/auth/session';
import { listMyTeams } from '@/lib/data/teams';
import { NewProjectForm } from './new-project-form';

export const metadata: Metadata = { title: 'New project' };

export default async function NewProjectPage() {
  const user = await requireUser();
  const teams = (await listMyTeams(user)).filter((t) => can(t.myRole, 'project.create'));
  if (teams.length === 0) {
    return <ForbiddenNotice message={`Creating a project needs the ${rolesAllowedText('project.create')} role in a team.`} />;
  }
  return (
    <div className="max-w-xl">
      <PageTitle kicker="Projects" title="New project" />
      <Card className="p-6">
        <NewProjectForm teams={teams.map((t) => ({ id: t.id, name: t.name }))} />
      </Card>
    </div>
  );
}
