import Link from 'next/link';
import { connection } from 'next/server';
import { CautionFooter } from '@/components/caution-footer';
import { buttonClass } from '@/components/ui/button';
import { LogoMark } from '@/components/ui/logo';

// Rendered per request, not prerendered: the page's scripts need the request's CSP nonce (proxy.ts) to run.
export default async function NotFound() {
  await connection();
  return (
    <div className="flex min-h-screen flex-col bg-wafer-100">
      <main className="flex flex-1 flex-col items-center justify-center px-6 text-center">
        <LogoMark size={44} />
        <p className="mt-6 font-mono text-xs tracking-[0.2em] text-copper-600">404 · ETCH STOP</p>
        <h1 className="mt-2 text-2xl font-semibold">Nothing at this address</h1>
        <p className="mt-2 max-w-sm text-sm text-ink-500">
          The page or project does not exist, or it belongs to a team you are not part of.
        </p>
        <Link href="/projects" className={buttonClass('primary', 'mt-6')}>
          Back to projects
        </Link>
      </main>
      <CautionFooter />
    </div>
  );
}
