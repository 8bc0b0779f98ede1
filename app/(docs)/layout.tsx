import Link from 'next/link';
import { AppHeader } from '@/components/app/app-header';
import { CautionFooter } from '@/components/caution-footer';
import { buttonClass } from '@/components/ui/button';
import { Logo, LogoMark } from '@/components/ui/logo';
import { getCurrentSession } from '@/lib/auth/session';
import { listMyTeams } from '@/lib/data/teams';

/**
 * Reference pages (Methods, API) are public: people who review a result should be able to read how it was
 * computed without an account. Signed-in users get the app's header; others a slim one with a sign-in link.
 */
export default async function DocsLayout({ children }: { children: React.ReactNode }) {
  const { user } = await getCurrentSession();
  return (
    <div className="flex min-h-screen flex-col">
      {user ? (
        <AppHeader user={user} teams={await listMyTeams(user)} />
      ) : (
        <header className="bg-ink-900 text-wafer-50">
          <div className="mx-auto flex h-14 max-w-6xl items-center gap-4 px-4 sm:gap-8 sm:px-6">
            <Link href="/" aria-label="Trenchant home">
              <span className="sm:hidden">
                <LogoMark size={26} />
              </span>
              <span className="hidden sm:inline">
                <Logo size={26} />
              </span>
            </Link>
            <nav className="flex items-center gap-1 text-sm">
              <Link href="/methods" className="rounded px-2.5 py-1.5 text-ink-100 hover:bg-ink-800 hover:text-white">
                Methods
              </Link>
              <Link href="/api-docs" className="rounded px-2.5 py-1.5 text-ink-100 hover:bg-ink-800 hover:text-white">
                API
              </Link>
            </nav>
            <Link href="/sign-in" className={buttonClass('primary', 'ml-auto !py-1.5')}>
              Sign in
            </Link>
          </div>
        </header>
      )}
      <main className="mx-auto w-full max-w-6xl flex-1 px-6 py-8">{children}</main>
      <CautionFooter />
    </div>
  );
}
