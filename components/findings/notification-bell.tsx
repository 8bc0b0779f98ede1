import Link from 'next/link';
import { getDb } from '@/db/client';
import { unreadCount } from '@/lib/review/notify';

/** Header link to the notification list with the unread count (server component, read at each page load). */
export function NotificationBell({ userId }: { userId: string }) {
  const n = unreadCount(getDb(), userId);
  return (
    <Link href="/notifications" className="relative rounded px-2 py-1 text-ink-300 hover:text-white" aria-label={n ? `Notifications, ${n} unread` : 'Notifications'} data-testid="notification-bell">
      Notifications
      {n > 0 ? (
        <span className="ml-1.5 inline-flex min-w-5 items-center justify-center rounded-full bg-copper-500 px-1.5 text-[11px] font-semibold text-white" data-testid="unread-count">
          {n > 99 ? '99+' : n}
        </span>
      ) : null}
    </Link>
  );
}
