import type { Metadata } from 'next';
import Link from 'next/link';
import { buttonClass } from '@/components/ui/button';
import { Card, PageTitle } from '@/components/ui/card';
import { RoleBadge } from '@/components/ui/role-badge';
import { can } from '@/lib/auth/permissions';
import { requireUser } from '@/lib/auth/session';
import { listMyProjects } from '@/lib/data/projects';
import { listMyTeams } from '@/lib/data/teams';

export const metadata: Metadata = { title: 'Projects' };

const dateFormat = new Intl.DateTimeFormat('en-GB', { day: 'numeric', month: 'short', year: 'numeric', timeZone: 'UTC' });

export default async function ProjectsPage() {
  const user = await requireUser();
  const [projects, teams] = await Promise.all([listMyProjects(user), listMyTeams(user)]);
  const mayCreate = teams.some((t) => can(t.myRole, 'project.create'));
  return (
    <>
      <PageTitle
        kicker={teams.map((t) => t.name).join(' · ') || 'No team yet'}
        title="Projects"
        actions={
          mayCreate ? (
            <Link href="/projects/new" className={buttonClass('primary')} data-testid="new-project">
              New project
            </Link>
          ) : null
        }
      />
      {teams.length === 0 ? (
        <Card className="p-8 text-sm text-ink-500">
          You are not in a team yet. Ask a team admin to invite your e-mail address, or create an account with a new team.
        </Card>
      ) : projects.length === 0 ? (
        <Card className="p-8 text-sm text-ink-500">No projects yet.{mayCreate ? ' Create the first one.' : ''}</Card>
      ) : (
        <ul className="grid gap-4 md:grid-cols-2" data-testid="project-list">
          {projects.map((p) => (
            <li key={p.id}>
              <Link href={`/projects/${p.id}`} className="group block h-full">
                <Card className="h-full p-5 transition-shadow group-hover:shadow-md group-hover:ring-1 group-hover:ring-copper-400/50">
                  <div className="flex items-start justify-between gap-3">
                    <h2 className="font-semibold text-ink-900 group-hover:text-copper-700">{p.name}</h2>
                    <RoleBadge role={p.myRole} />
                  </div>
                  {p.description ? <p className="mt-2 line-clamp-2 text-sm text-ink-500">{p.description}</p> : null}
                  <p className="mt-4 font-mono text-[11px] text-ink-500">
                    {p.teamName} · created {dateFormat.format(new Date(p.createdAt))}
                    {p.createdByName ? ` by ${p.createdByName}` : ''}
                  </p>
                </Card>
              </Link>
            </li>
          ))}
        </ul>
      )}
    </>
  );
}
