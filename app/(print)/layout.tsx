import { redirect } from 'next/navigation';
import { getCurrentSession } from '@/lib/auth/session';

// Printable pages: no app header or footer, light paper styles; the same session check as the app.
export default async function PrintLayout({ children }: { children: React.ReactNode }) {
  const { user } = await getCurrentSession();
  if (!user) redirect('/sign-in');
  return <div className="min-h-screen bg-white text-ink-900 print:bg-white">{children}</div>;
}
