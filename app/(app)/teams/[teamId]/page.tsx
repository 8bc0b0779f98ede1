import type { Metadata } from 'next';
import Link from 'next/link';
import { notFound } from 'next/navigation';
import { ForbiddenNotice } from '@/components/app/forbidden-notice';
import { buttonClass } from '@/components/ui/button';
import { Card, PageTitle } from '@/components/ui/card';
import { RoleBadge } from '@/components/ui/role-badge';
import { can, PERMISSION_LABEL, ROLE_LABEL, TEAM_ACTIONS, TEAM_ROLES } from '@/lib/auth/permissions';
import { listPendingInvites } from '@/lib/data/invites';
import { idParam } from '@/lib/data/schemas';
import { getTeamOverview } from '@/lib/data/teams';
import { isApiError } from '@/lib/http/errors';
import { CancelInviteButton, InviteForm, MemberControls, RenameTeamForm } from './team-forms';
import { TeamLimitsForm } from '@/components/teams/team-limits-form';
import { getDb } from '@/db/client';
import { DEFAULT_TEAM_LIMITS, getTeamLimits, teamStoredResultBytes } from '@/lib/jobs/team-limits';

export const metadata: Metadata = { title: 'Team' };

export default async function TeamPage({ params }: { params: Promise<{ teamId: string }> }) {
  const parsed = idParam.safeParse((await params).teamId);
  if (!parsed.success) notFound();
  const teamId = parsed.data;
  let team;
  try {
    team = await getTeamOverview(teamId);
  } catch (error) {
    if (isApiError(error) && error.status === 403) return <ForbiddenNotice message={error.message} />;
    if (isApiError(error) && error.status === 404) notFound();
    throw error;
  }
  const manage = can(team.myRole, 'team.manage');
  const invite = can(team.myRole, 'members.invite');
  const pending = invite ? await listPendingInvites(teamId) : [];
  return (
    <>
      <PageTitle
        kicker="Team"
        title={team.name}
        actions={
          can(team.myRole, 'outbox.view') ? (
            <>
              <Link href={`/teams/${teamId}/outbox`} className={buttonClass('secondary')}>
                Outbox
              </Link>
              {can(team.myRole, 'audit.view') ? (
                <Link href={`/teams/${teamId}/audit`} className={buttonClass('secondary')}>
                  Audit log
                </Link>
              ) : null}
            </>
          ) : null
        }
      />
      <div className="grid gap-6 lg:grid-cols-[1fr_320px]">
        <div className="space-y-6">
          <Card>
            <h2 className="border-b border-wafer-200 px-5 py-3 text-sm font-semibold">Members ({team.members.length})</h2>
            <ul className="divide-y divide-wafer-200" data-testid="member-list">
              {team.members.map((m) => (
                <li key={m.userId} className="flex flex-wrap items-center justify-between gap-3 px-5 py-3">
                  <div>
                    <p className="text-sm font-medium">{m.name}</p>
                    <p className="font-mono text-xs text-ink-500">{m.email}</p>
                  </div>
                  {manage ? <MemberControls teamId={teamId} userId={m.userId} role={m.role} name={m.name} /> : <RoleBadge role={m.role} />}
                </li>
              ))}
            </ul>
          </Card>
          {pending.length > 0 ? (
            <Card>
              <h2 className="border-b border-wafer-200 px-5 py-3 text-sm font-semibold">Pending invitations</h2>
              <ul className="divide-y divide-wafer-200" data-testid="pending-invites">
                {pending.map((p) => (
                  <li key={p.id} className="flex items-center justify-between gap-3 px-5 py-2.5 text-sm">
                    <span className="font-mono text-xs">{p.email}</span>
                    <span className="flex items-center gap-3">
                      <RoleBadge role={p.role} />
                      <CancelInviteButton teamId={teamId} inviteId={p.id} email={p.email} />
                    </span>
                  </li>
                ))}
              </ul>
            </Card>
          ) : null}
          <Card className="p-5">
            <h2 className="mb-3 text-sm font-semibold">Who may do what</h2>
            <table className="w-full text-left text-xs">
              <thead>
                <tr className="text-ink-500">
                  <th className="py-1 font-medium">Action</th>
                  {TEAM_ROLES.map((r) => (
                    <th key={r} className="py-1 text-center font-medium">{ROLE_LABEL[r]}</th>
                  ))}
                </tr>
              </thead>
              <tbody>
                {TEAM_ACTIONS.map((action) => (
                  <tr key={action} className="border-t border-wafer-200">
                    <td className="py-1" title={action}>{PERMISSION_LABEL[action]}</td>
                    {TEAM_ROLES.map((r) => (
                      <td key={r} className="py-1 text-center">
                        {can(r, action) ? <span className="text-pass">●</span> : <span className="text-ink-300">·</span>}
                      </td>
                    ))}
                  </tr>
                ))}
              </tbody>
            </table>
          </Card>
        </div>
        <div className="space-y-6">
          {invite ? (
            <Card className="p-5">
              <h2 className="mb-3 text-sm font-semibold">Invite by e-mail</h2>
              <InviteForm teamId={teamId} />
            </Card>
          ) : null}
          {manage ? (
            <Card className="p-5">
              <h2 className="mb-3 text-sm font-semibold">Settings</h2>
              <RenameTeamForm teamId={teamId} name={team.name} />
            </Card>
          ) : null}
          {manage ? (
            <Card className="p-5">
              <h2 className="mb-3 text-sm font-semibold">Resource limits</h2>
              <TeamLimitsForm teamId={teamId} limits={getTeamLimits(getDb(), teamId)} defaults={DEFAULT_TEAM_LIMITS} storedBytes={teamStoredResultBytes(getDb(), teamId)} />
            </Card>
          ) : null}
          {!invite && !manage ? (
            <Card className="p-5 text-sm text-ink-500">
              You are a {ROLE_LABEL[team.myRole].toLowerCase()} in this team. Admins manage members and invitations.
            </Card>
          ) : null}
        </div>
      </div>
    </>
  );
}
