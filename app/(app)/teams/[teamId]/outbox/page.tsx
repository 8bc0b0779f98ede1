import type { Metadata } from 'next';
import Link from 'next/link';
import { notFound } from 'next/navigation';
import { ForbiddenNotice } from '@/components/app/forbidden-notice';
import { Card, PageTitle } from '@/components/ui/card';
import { listOutbox, usingDevelopmentMail } from '@/lib/data/outbox';
import { idParam } from '@/lib/data/schemas';
import { isApiError } from '@/lib/http/errors';

export const metadata: Metadata = { title: 'Outbox' };

export default async function OutboxPage({ params }: { params: Promise<{ teamId: string }> }) {
  const parsed = idParam.safeParse((await params).teamId);
  if (!parsed.success) notFound();
  const teamId = parsed.data;
  let messages;
  try {
    messages = await listOutbox(teamId);
  } catch (error) {
    if (isApiError(error) && error.status === 403) return <ForbiddenNotice message={error.message} />;
    throw error;
  }
  return (
    <>
      <PageTitle kicker={<Link href={`/teams/${teamId}`} className="hover:underline">Team</Link>} title="Outbox" />
      <p className="mb-4 max-w-2xl text-sm text-ink-500">
        {usingDevelopmentMail()
          ? 'Mail is not delivered in this instance: the built-in development mail server keeps every message here. Set SMTP_URL to send real mail.'
          : 'Mail goes to the SMTP server configured in SMTP_URL; messages sent before that was set are still listed here.'}
      </p>
      {messages.length === 0 ? (
        <Card className="p-8 text-sm text-ink-500">No messages yet. Invitations you send appear here.</Card>
      ) : (
        <ul className="space-y-3" data-testid="outbox-list">
          {messages.map((m) => (
            <li key={m.id}>
              <Card className="p-5">
                <div className="flex flex-wrap items-baseline justify-between gap-2">
                  <h2 className="text-sm font-semibold">{m.subject}</h2>
                  <span className="font-mono text-[11px] text-ink-500">{m.receivedAt.replace('T', ' ').slice(0, 19)} UTC</span>
                </div>
                <p className="mt-1 font-mono text-xs text-ink-500">
                  to {m.to} · from {m.from}
                </p>
                <pre className="mt-3 overflow-x-auto rounded bg-wafer-100 p-3 font-mono text-xs leading-relaxed whitespace-pre-wrap text-ink-700">{m.body}</pre>
              </Card>
            </li>
          ))}
        </ul>
      )}
    </>
  );
}
