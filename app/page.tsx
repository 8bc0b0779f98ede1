import { redirect } from 'next/navigation';
import { getCurrentSession } from '@/lib/auth/session';

export default async function Home() {
  const { user } = await getCurrentSession();
  redirect(user ? '/projects' : '/sign-in');
}
