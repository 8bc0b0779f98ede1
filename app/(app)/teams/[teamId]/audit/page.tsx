import type { Metadata } from 'next';
import Link from 'next/link';
import { notFound } from 'next/navigation';
import { ForbiddenNotice } from '@/components/app/forbidden-notice';
import { Card, PageTitle } from '@/components/ui/card';
import { getDb } from '@/db/client';
import { requireTeamPermission } from '@/lib/auth/guard';
import { idParam } from '@/lib/data/schemas';
import { isApiError } from '@/lib/http/errors';
import { listAudit } from '@/lib/review/audit-list';

export const metadata: Metadata = { title: 'Audit log' };

const PAGE = 200;

/** Analyses and findings link to their page; other targets show as recorded. */
function Target({ target }: { target: string | null }) {
  const m = /^(?:analysis:|finding:)([A-Za-z0-9_-]+)(?:\/(.+))?$/.exec(target ?? '');
  if (!m?.[1]) return <>{target ?? ''}</>;
  const href = `/analyses/${m[1]}${m[2] ? `?finding=${encodeURIComponent(m[2])}` : ''}`;
  return (
    <Link href={href} className="text-oxide-600 hover:underline">
      {target}
    </Link>
  );
}

/** Who changed what, when (admins only: 'audit.view'). */
export default async function AuditPage({ params, searchParams }: { params: Promise<{ teamId: string }>; searchParams: Promise<{ action?: string; before?: string }> }) {
  const parsed = idParam.safeParse((await params).teamId);
  if (!parsed.success) notFound();
  const teamId = parsed.data;
  try {
    await requireTeamPermission(teamId, 'audit.view');
  } catch (error) {
    if (isApiError(error) && error.status === 403) return <ForbiddenNotice message={error.message} />;
    throw error;
  }
  const sp = await searchParams;
  const action = (sp.action ?? '').slice(0, 60);
  const before = Number(sp.before) || undefined;
  const rows = listAudit(getDb(), teamId, { action, before, limit: PAGE });
  const last = rows.at(-1);
  return (
    <>
      <PageTitle kicker={<Link href={`/teams/${teamId}`} className="hover:underline">Team</Link>} title="Audit log" />
      <form method="get" className="mb-4 flex items-end gap-2 text-sm">
        <label className="text-xs text-ink-700">
          Action starts with
          <input name="action" defaultValue={action} placeholder="e.g. flag. or revision." className="mt-1 block w-56 rounded-md border border-wafer-300 bg-white px-2 py-1.5 text-sm" />
        </label>
        <button type="submit" className="rounded-md px-3 py-1.5 text-sm ring-1 ring-wafer-300 hover:bg-white">
          Filter
        </button>
      </form>
      <Card>
        <table className="w-full text-left text-xs" data-testid="audit-table">
          <thead className="text-ink-500">
            <tr>
              <th className="px-4 py-2 font-medium">when (UTC)</th>
              <th className="px-4 py-2 font-medium">who</th>
              <th className="px-4 py-2 font-medium">action</th>
              <th className="px-4 py-2 font-medium">target</th>
              <th className="px-4 py-2 font-medium">detail</th>
            </tr>
          </thead>
          <tbody>
            {rows.map((r) => (
              <tr key={r.id} className="border-t border-wafer-200 align-top">
                <td className="px-4 py-1.5 font-mono whitespace-nowrap">{r.at.toISOString().replace('T', ' ').slice(0, 19)}</td>
                <td className="px-4 py-1.5">{r.actorName ?? (r.actorId ? 'former member' : 'system')}</td>
                <td className="px-4 py-1.5 font-mono">{r.action}</td>
                <td className="px-4 py-1.5 font-mono break-all">
                  <Target target={r.target} />
                </td>
                <td className="max-w-md px-4 py-1.5 break-words text-ink-500">
                  {r.detail
                    ? Object.entries(r.detail)
                        .filter(([, v]) => v !== null && v !== undefined)
                        .map(([k, v]) => `${k}: ${typeof v === 'string' ? v : JSON.stringify(v)}`)
                        .join(' · ')
                    : ''}
                </td>
              </tr>
            ))}
            {rows.length === 0 ? (
              <tr>
                <td colSpan={5} className="px-4 py-4 text-ink-500">
                  Nothing recorded{action ? ` for actions starting with "${action}"` : ''}.
                </td>
              </tr>
            ) : null}
          </tbody>
        </table>
      </Card>
      {rows.length === PAGE && last ? (
        <p className="mt-3 text-right text-sm">
          <Link href={`/teams/${teamId}/audit?${new URLSearchParams({ ...(action ? { action } : {}), before: String(last.id) })}`} className="text-oxide-600 hover:underline">
            Older entries →
          </Link>
        </p>
      ) : null}
    </>
  );
}
