import Link from 'next/link';
import { signOutAction } from '@/app/(auth)/actions';
import { Logo } from '@/components/ui/logo';
import { NotificationBell } from '@/components/findings/notification-bell';
import type { AuthUser } from '@/lib/auth/session';

/** Top bar of the signed-in app: mark, main navigation, the user and sign-out. */
export function AppHeader({ user, teams }: { user: AuthUser; teams: { id: string; name: string }[] }) {
  return (
    <header className="bg-ink-900 text-wafer-50">
      {/* Below lg the navigation takes its own row and scrolls sideways, so a phone never gets a page wider than itself. */}
      <div className="mx-auto flex max-w-6xl flex-wrap items-center gap-x-4 gap-y-1 px-4 py-2 sm:px-6 lg:h-14 lg:flex-nowrap lg:gap-x-8 lg:py-0">
        <Link href="/projects" aria-label="Trenchant home" className="shrink-0">
          <Logo size={26} />
        </Link>
        <nav className="order-last -mx-2.5 flex w-full items-center gap-1 overflow-x-auto whitespace-nowrap text-sm lg:order-none lg:mx-0 lg:w-auto" data-testid="main-nav">
          <Link href="/projects" className="rounded px-2.5 py-1.5 text-ink-100 hover:bg-ink-800 hover:text-white">
            Projects
          </Link>
          {teams.map((t) => (
            <Link key={t.id} href={`/teams/${t.id}`} className="rounded px-2.5 py-1.5 text-ink-100 hover:bg-ink-800 hover:text-white">
              {t.name}
            </Link>
          ))}
          <Link href="/models" className="rounded px-2.5 py-1.5 text-ink-100 hover:bg-ink-800 hover:text-white">
            Models
          </Link>
          <Link href="/methods" className="rounded px-2.5 py-1.5 text-ink-100 hover:bg-ink-800 hover:text-white">
            Methods
          </Link>
          <Link href="/api-docs" className="rounded px-2.5 py-1.5 text-ink-100 hover:bg-ink-800 hover:text-white">
            API
          </Link>
          <Link href="/account/tokens" className="rounded px-2.5 py-1.5 text-ink-300 hover:bg-ink-800 hover:text-white sm:hidden">
            API tokens
          </Link>
        </nav>
        <div className="ml-auto flex items-center gap-3 whitespace-nowrap text-sm">
          <NotificationBell userId={user.id} />
          <Link href="/account/tokens" className="hidden text-ink-300 hover:text-white sm:inline">
            API tokens
          </Link>
          <span className="hidden text-ink-300 sm:inline" data-testid="current-user">
            {user.name}
          </span>
          <form action={signOutAction}>
            <button type="submit" className="rounded border border-ink-700 px-2.5 py-1 text-ink-100 hover:border-copper-400 hover:text-white">
              Sign out
            </button>
          </form>
        </div>
      </div>
    </header>
  );
}
