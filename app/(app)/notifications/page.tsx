import type { Metadata } from 'next';
import { redirect } from 'next/navigation';
import { NotificationList } from '@/components/findings/notification-list';
import { PageTitle } from '@/components/ui/card';
import { getDb } from '@/db/client';
import { getCurrentSession } from '@/lib/auth/session';
import { getPrefs, listNotifications } from '@/lib/review/notifications';

export const metadata: Metadata = { title: 'Notifications' };

export default async function NotificationsPage() {
  const { user } = await getCurrentSession();
  if (!user) redirect('/sign-in');
  const db = getDb();
  return (
    <>
      <PageTitle kicker="You" title="Notifications" />
      <NotificationList initial={listNotifications(db, user.id)} prefs={getPrefs(db, user.id)} />
    </>
  );
}
