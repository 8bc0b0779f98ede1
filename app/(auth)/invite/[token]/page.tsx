import type { Metadata } from 'next';
import Link from 'next/link';
import { buttonClass } from '@/components/ui/button';
import { ROLE_LABEL } from '@/lib/auth/permissions';
import { getCurrentSession } from '@/lib/auth/session';
import { accountExists } from '@/lib/data/accounts';
import { findInvite } from '@/lib/data/invites';
import { AcceptInviteForm, NewAccountInviteForm } from './invite-forms';

export const metadata: Metadata = { title: 'Invitation' };

export default async function InvitePage({ params }: { params: Promise<{ token: string }> }) {
  const { token } = await params;
  const invite = token.length <= 100 ? findInvite(token) : null;
  if (!invite) {
    return (
      <>
        <h1 className="text-2xl font-semibold tracking-tight">Invitation not valid</h1>
        <p className="mt-2 text-sm text-ink-500">This link is unknown, was already used, or has expired. Ask the team admin for a new one.</p>
        <Link href="/sign-in" className={buttonClass('secondary', 'mt-6')}>
          Go to sign-in
        </Link>
      </>
    );
  }
  const { user } = await getCurrentSession();
  const heading = (
    <>
      <h1 className="text-2xl font-semibold tracking-tight">{`Join ${invite.teamName}`}</h1>
      <p className="mt-1 mb-6 text-sm text-ink-500">
        {invite.invitedBy ?? 'A team admin'} invited <span className="font-mono">{invite.email}</span> as{' '}
        {ROLE_LABEL[invite.role].toLowerCase()}.
      </p>
    </>
  );
  if (user) {
    return (
      <>
        {heading}
        {user.email === invite.email ? (
          <AcceptInviteForm token={token} />
        ) : (
          <p className="text-sm text-fail">
            You are signed in as {user.email}. Sign out and open the link again to accept as {invite.email}.
          </p>
        )}
      </>
    );
  }
  return (
    <>
      {heading}
      {accountExists(invite.email) ? (
        <Link href={`/sign-in?next=${encodeURIComponent(`/invite/${token}`)}`} className={buttonClass('primary', 'w-full')}>
          Sign in to accept
        </Link>
      ) : (
        <NewAccountInviteForm token={token} email={invite.email} />
      )}
    </>
  );
}
