import type { Metadata } from 'next';
import { headers } from 'next/headers';
import Link from 'next/link';
import { Card, PageTitle } from '@/components/ui/card';
import { listApiTokensWithTeams } from '@/lib/auth/api-tokens';
import { ROLE_LABEL } from '@/lib/auth/permissions';
import { requireUser } from '@/lib/auth/session';
import { listMyTeams } from '@/lib/data/teams';
import { publicBaseUrl } from '@/lib/http/base-url';
import { CreateTokenForm, RevokeTokenButton } from './token-forms';

export const metadata: Metadata = { title: 'API tokens' };

const when = new Intl.DateTimeFormat('en-GB', {
  day: 'numeric',
  month: 'short',
  year: 'numeric',
  hour: '2-digit',
  minute: '2-digit',
  timeZone: 'UTC',
  timeZoneName: 'short',
});

export default async function ApiTokensPage() {
  const user = await requireUser();
  const [teams, tokens] = await Promise.all([listMyTeams(user), Promise.resolve(listApiTokensWithTeams(user.id))]);
  const base = publicBaseUrl(await headers());
  return (
    <div className="max-w-5xl space-y-6">
      <PageTitle kicker="Account" title="API tokens" />
      <Card className="p-6">
        <div className="grid gap-6 md:grid-cols-[1.1fr_1fr]">
          <div className="space-y-2 text-sm leading-relaxed text-ink-700">
            <p>
              A token lets a script or a CI job call the <Link href="/api-docs" className="font-medium text-oxide-600 hover:underline">Trenchant API</Link> as
              you. Each token reaches <strong>one team</strong> and acts with your role there; other teams&apos; projects answer
              404 to it. Revoke a token as soon as it is no longer needed or may have leaked.
            </p>
            <p className="text-ink-500">Tokens stop working when you leave the team.</p>
          </div>
          <pre className="self-start overflow-x-auto rounded-md bg-ink-900 p-4 font-mono text-xs leading-relaxed text-wafer-50" aria-label="Example request">
            <span className="text-ink-300"># who am I, and which team does the token reach?</span>
            {`\ncurl -H "Authorization: Bearer $TRENCHANT_TOKEN" \\\n     ${base}/api/v1/me`}
          </pre>
        </div>
      </Card>

      <Card className="p-6">
        <h2 className="mb-4 text-base font-semibold text-ink-900">New token</h2>
        {teams.length === 0 ? (
          <p className="text-sm text-ink-500">You are not in a team yet, so there is nothing a token could reach.</p>
        ) : (
          <CreateTokenForm teams={teams.map((t) => ({ id: t.id, name: t.name, roleLabel: ROLE_LABEL[t.myRole] }))} />
        )}
      </Card>

      <Card className="overflow-hidden">
        <h2 className="border-b border-wafer-200 px-6 py-4 text-base font-semibold text-ink-900">Your tokens</h2>
        {tokens.length === 0 ? (
          <p className="px-6 py-6 text-sm text-ink-500">No tokens yet.</p>
        ) : (
          <div className="overflow-x-auto">
            <table className="w-full text-left text-sm" data-testid="token-list">
              <thead className="bg-wafer-50 text-xs tracking-wide text-ink-500 uppercase">
                <tr>
                  <th className="px-6 py-2.5 font-medium">Name</th>
                  <th className="px-3 py-2.5 font-medium">Token</th>
                  <th className="px-3 py-2.5 font-medium">Team</th>
                  <th className="px-3 py-2.5 font-medium">Created</th>
                  <th className="px-3 py-2.5 font-medium">Last used</th>
                  <th className="px-6 py-2.5 text-right font-medium">Status</th>
                </tr>
              </thead>
              <tbody className="divide-y divide-wafer-200">
                {tokens.map((t) => (
                  <tr key={t.id} className={t.revokedAt ? 'text-ink-500' : 'text-ink-900'} data-testid="token-row">
                    <td className="px-6 py-3 font-medium">{t.name}</td>
                    <td className="px-3 py-3 font-mono text-xs">{t.prefix}…</td>
                    <td className="px-3 py-3">{t.teamName}</td>
                    <td className="px-3 py-3 text-xs whitespace-nowrap">{when.format(t.createdAt)}</td>
                    <td className="px-3 py-3 text-xs whitespace-nowrap">{t.lastUsedAt ? when.format(t.lastUsedAt) : 'never'}</td>
                    <td className="px-6 py-3 text-right">
                      {t.revokedAt ? (
                        <span className="text-xs whitespace-nowrap" data-testid="token-revoked">
                          Revoked {when.format(t.revokedAt)}
                        </span>
                      ) : (
                        <RevokeTokenButton tokenId={t.id} name={t.name} />
                      )}
                    </td>
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
        )}
      </Card>
    </div>
  );
}
