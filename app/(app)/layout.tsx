import { redirect } from 'next/navigation';
import { AppHeader } from '@/components/app/app-header';
import { CautionFooter } from '@/components/caution-footer';
import { getCurrentSession } from '@/lib/auth/session';
import { listMyTeams } from '@/lib/data/teams';

// Page-level check for navigation only; every action and handler checks again through the guard.
export default async function AppLayout({ children }: { children: React.ReactNode }) {
  const { user } = await getCurrentSession();
  if (!user) redirect('/sign-in');
  const teams = await listMyTeams(user);
  return (
    <div className="flex min-h-screen flex-col">
      <AppHeader user={user} teams={teams} />
      <main className="mx-auto w-full max-w-6xl flex-1 px-6 py-8">{children}</main>
      <CautionFooter />
    </div>
  );
}
