import type { MethodFormula, MethodSection, MethodSource, SourceStrength } from '@/lib/methods';

const STRENGTH: Record<SourceStrength, { label: string; className: string }> = {
  published: { label: 'published', className: 'bg-pass/10 text-pass ring-pass/30' },
  computed: { label: 'computed here', className: 'bg-oxide-500/10 text-oxide-600 ring-oxide-500/30' },
  'common-practice': { label: 'common practice, no source', className: 'bg-wafer-200 text-ink-700 ring-wafer-300' },
  'from-memory': { label: 'from memory, to be verified', className: 'bg-warn/10 text-warn ring-warn/40' },
};

/** One Methods section (or subsection): text, formulas in monospace, and its sources. */
export function MethodSectionView({ section, number, depth = 0 }: { section: MethodSection; number: string; depth?: number }) {
  const Heading = depth === 0 ? 'h2' : 'h3';
  return (
    <section id={section.id} className={`scroll-mt-6 ${depth > 0 ? 'mt-8 border-t border-wafer-200 pt-6' : ''}`} data-testid="method-section">
      <Heading className={depth === 0 ? 'text-xl font-semibold tracking-tight text-ink-900' : 'text-base font-semibold text-ink-900'}>
        <span className="mr-2 font-mono text-sm font-normal text-copper-600">{number}</span>
        {section.title}
      </Heading>
      <div className="mt-3 space-y-3 text-[15px] leading-7 text-ink-800">
        {section.body.map((p) => (
          <p key={p}>{p}</p>
        ))}
      </div>
      {section.formulas.length > 0 ? (
        <div className="mt-5 space-y-3">
          {section.formulas.map((f) => (
            <FormulaView key={f.label + f.text} formula={f} />
          ))}
        </div>
      ) : null}
      {section.sources.length > 0 ? <SourceList sources={section.sources} /> : null}
      {section.subsections?.map((sub, i) => (
        <MethodSectionView key={sub.id} section={sub} number={`${number}${i + 1}.`} depth={depth + 1} />
      ))}
    </section>
  );
}

function FormulaView({ formula }: { formula: MethodFormula }) {
  return (
    <figure className="rounded-md border border-wafer-200 bg-wafer-50 px-4 py-3">
      <figcaption className="text-[13px] font-semibold text-ink-700">{formula.label}</figcaption>
      <pre className="mt-1.5 overflow-x-auto font-mono text-[13.5px] leading-6 whitespace-pre-wrap text-ink-900">{formula.text}</pre>
      {formula.where?.length ? (
        <dl className="mt-2 grid grid-cols-[auto_1fr] gap-x-3 gap-y-0.5 text-[13px] leading-5 text-ink-700">
          {formula.where.map((w) => {
            const at = w.indexOf(': ');
            return at > 0 ? (
              <div key={w} className="contents">
                <dt className="font-mono text-ink-900">{w.slice(0, at)}</dt>
                <dd>{w.slice(at + 2)}</dd>
              </div>
            ) : (
              <dd key={w} className="col-span-2">
                {w}
              </dd>
            );
          })}
        </dl>
      ) : null}
    </figure>
  );
}

function SourceList({ sources }: { sources: MethodSource[] }) {
  return (
    <div className="mt-5">
      <p className="text-xs font-semibold tracking-wide text-ink-500 uppercase">Sources</p>
      <ul className="mt-2 space-y-1.5 text-[13px] leading-5 text-ink-700">
        {sources.map((s) => (
          <li key={s.citation} className="flex items-baseline gap-2">
            <span className={`shrink-0 rounded px-1.5 py-px text-[10.5px] font-medium ring-1 ${STRENGTH[s.strength].className}`}>
              {STRENGTH[s.strength].label}
            </span>
            <span>
              {s.citation}
              {s.note ? <span className="text-ink-500"> — {s.note}</span> : null}
            </span>
          </li>
        ))}
      </ul>
    </div>
  );
}
