import type { Metadata } from 'next';
import { Card, PageTitle } from '@/components/ui/card';
import { CAUTIONS, METHOD_SECTIONS } from '@/lib/methods';
import { MethodSectionView } from '../_components/method-section';

export const metadata: Metadata = { title: 'Methods' };

/** The cautions are shown first, in their own box; the section that repeats them for text reports is skipped. */
const SECTIONS = METHOD_SECTIONS.filter((s) => s.id !== 'cautions');

export default function MethodsPage() {
  return (
    <>
      <PageTitle kicker="Reference" title="Methods" />
      <div className="grid gap-8 lg:grid-cols-[14rem_1fr]">
        <nav aria-label="Sections" className="hidden lg:block">
          <ol className="sticky top-6 space-y-1 text-sm">
            <li>
              <a href="#cautions" className="block rounded px-2 py-1 font-medium text-copper-700 hover:bg-wafer-200/60">
                Cautions
              </a>
            </li>
            {SECTIONS.map((s, i) => (
              <li key={s.id}>
                <a href={`#${s.id}`} className="flex gap-1.5 rounded px-2 py-1 text-ink-700 hover:bg-wafer-200/60 hover:text-ink-900">
                  <span className="w-4 shrink-0 pt-px font-mono text-xs text-ink-500">{i + 1}.</span>
                  <span>{s.title}</span>
                </a>
                {s.subsections?.length ? (
                  <ol className="mt-0.5 mb-1 ml-7 space-y-0.5 border-l border-wafer-300 pl-2 text-[13px]">
                    {s.subsections.map((sub) => (
                      <li key={sub.id}>
                        <a href={`#${sub.id}`} className="block py-0.5 text-ink-500 hover:text-ink-900">
                          {sub.title}
                        </a>
                      </li>
                    ))}
                  </ol>
                ) : null}
              </li>
            ))}
          </ol>
        </nav>
        <div className="min-w-0 max-w-3xl space-y-6">
          <p className="text-[15px] leading-7 text-ink-700">
            How every number in a Trenchant result is computed, in the words the reports use. Each result carries a method
            block naming the choices behind it (window origin, denominator, edge policy, kernel, process model); each line
            of that block points to a section below.
          </p>
          <aside id="cautions" className="scroll-mt-6 rounded-lg border border-copper-400/60 border-l-4 border-l-copper-500 bg-copper-300/10 p-5" data-testid="method-cautions">
            <h2 className="text-sm font-semibold tracking-wide text-copper-700 uppercase">Read before using a result</h2>
            <ul className="mt-3 list-disc space-y-2 pl-5 text-[15px] leading-6 text-ink-900 marker:text-copper-500">
              {CAUTIONS.map((c) => (
                <li key={c}>{c}</li>
              ))}
            </ul>
          </aside>
          {SECTIONS.map((s, i) => (
            <Card key={s.id} className="p-6 sm:p-8">
              <MethodSectionView section={s} number={`${i + 1}.`} />
            </Card>
          ))}
        </div>
      </div>
    </>
  );
}
