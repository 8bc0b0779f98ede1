import { TrenchFigure } from '@/components/brand/trench-figure';
import { CautionFooter } from '@/components/caution-footer';
import { Logo } from '@/components/ui/logo';

export default function AuthLayout({ children }: { children: React.ReactNode }) {
  return (
    <div className="flex min-h-screen flex-col lg:flex-row">
      <aside className="flex flex-col justify-between bg-ink-900 px-8 py-8 text-wafer-50 lg:w-[46%] lg:px-12 lg:py-10">
        <Logo />
        <div className="my-10 hidden lg:block">
          <TrenchFigure />
          <h2 className="mt-8 max-w-md text-2xl leading-snug font-semibold">
            Know where your etch runs deep, shallow or late — before the mask is cut.
          </h2>
          <p className="mt-3 max-w-md text-sm leading-relaxed text-ink-300">
            Open-area density, opening widths and aspect-ratio dependent etch depth for every layer of a layout,
            checked against your team&apos;s calibrated process models.
          </p>
        </div>
        <p className="hidden text-xs text-ink-500 lg:block">Layout designers · process engineers · reviewers</p>
      </aside>
      <div className="flex flex-1 flex-col bg-wafer-50">
        <main className="flex flex-1 items-center justify-center px-6 py-12">
          <div className="w-full max-w-sm">{children}</div>
        </main>
        <CautionFooter />
      </div>
    </div>
  );
}
