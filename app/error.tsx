'use client';

import Link from 'next/link';
import { buttonClass } from '@/components/ui/button';
import { LogoMark } from '@/components/ui/logo';

/** Route error boundary: a plain message and the digest for the logs; never the error text or stack. */
export default function ErrorPage({ error, reset }: { error: Error & { digest?: string }; reset: () => void }) {
  return (
    <main className="flex min-h-[70vh] flex-col items-center justify-center px-6 text-center">
      <LogoMark size={44} />
      <p className="mt-6 font-mono text-xs tracking-[0.2em] text-fail">500 · PROCESS UPSET</p>
      <h1 className="mt-2 text-2xl font-semibold">Something went wrong on our side</h1>
      <p className="mt-2 max-w-sm text-sm text-ink-500">
        Nothing you entered was lost on the server. Try again; if it keeps happening, give your admin this reference:
        <span className="mt-1 block font-mono text-xs">{error.digest ?? 'no reference'}</span>
      </p>
      <div className="mt-6 flex gap-2">
        <button type="button" onClick={reset} className={buttonClass('primary')}>
          Try again
        </button>
        <Link href="/projects" className={buttonClass('secondary')}>
          Projects
        </Link>
      </div>
    </main>
  );
}
