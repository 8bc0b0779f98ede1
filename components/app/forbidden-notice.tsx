import Link from 'next/link';
import { buttonClass } from '@/components/ui/button';

/** Shown in place of a page the user's role does not allow (the server refuses the action as well). */
export function ForbiddenNotice({ message }: { message: string }) {
  return (
    <div className="mx-auto max-w-lg rounded-lg border border-wafer-200 bg-white p-8 text-center" data-testid="forbidden">
      <p className="font-mono text-xs tracking-widest text-copper-600">403 · NOT YOUR ROLE</p>
      <h1 className="mt-2 text-xl font-semibold">You can&apos;t do this here</h1>
      <p className="mt-2 text-sm text-ink-500">{message}</p>
      <Link href="/projects" className={buttonClass('secondary', 'mt-6')}>
        Back to projects
      </Link>
    </div>
  );
}
