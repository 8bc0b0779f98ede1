import type { Metadata } from 'next';
import Link from 'next/link';
import { redirect } from 'next/navigation';
import { getCurrentSession } from '@/lib/auth/session';
import { safeNextPath } from '@/lib/http/safe-next';
import { SignInForm } from './sign-in-form';

export const metadata: Metadata = { title: 'Sign in' };

export default async function SignInPage({ searchParams }: { searchParams: Promise<Record<string, string | string[] | undefined>> }) {
  const params = await searchParams;
  const next = safeNextPath(params.next);
  const { user } = await getCurrentSession();
  if (user) redirect(next);
  return (
    <>
      <h1 className="text-2xl font-semibold tracking-tight">Sign in</h1>
      <p className="mt-1 mb-6 text-sm text-ink-500">Welcome back. Your team&apos;s projects are waiting.</p>
      <SignInForm next={next} />
      <p className="mt-6 text-sm text-ink-500">
        New here?{' '}
        <Link href={`/sign-up${next !== '/projects' ? `?next=${encodeURIComponent(next)}` : ''}`} className="font-medium text-oxide-600 hover:underline">
          Create an account
        </Link>
      </p>
    </>
  );
}
