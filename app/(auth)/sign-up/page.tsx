import type { Metadata } from 'next';
import Link from 'next/link';
import { redirect } from 'next/navigation';
import { getCurrentSession } from '@/lib/auth/session';
import { safeNextPath } from '@/lib/http/safe-next';
import { SignUpForm } from './sign-up-form';

export const metadata: Metadata = { title: 'Create an account' };

export default async function SignUpPage({ searchParams }: { searchParams: Promise<Record<string, string | string[] | undefined>> }) {
  const next = safeNextPath((await searchParams).next);
  const { user } = await getCurrentSession();
  if (user) redirect(next);
  return (
    <>
      <h1 className="text-2xl font-semibold tracking-tight">Create an account</h1>
      <p className="mt-1 mb-6 text-sm text-ink-500">
        Name a team to start one as its admin, or leave it empty and join a team through an e-mail invitation.
      </p>
      <SignUpForm next={next} />
      <p className="mt-6 text-sm text-ink-500">
        Already registered?{' '}
        <Link href="/sign-in" className="font-medium text-oxide-600 hover:underline">
          Sign in
        </Link>
      </p>
    </>
  );
}
