import type { Metadata } from 'next';
import Link from 'next/link';
import { eq } from 'drizzle-orm';
import { PrintButton } from '@/components/findings/print-button';
import { STATUS_LABEL } from '@/lib/review/statuses';
import { getDb } from '@/db/client';
import { analysisMaps } from '@/db/schema';
import { getAnalysisView } from '@/lib/jobs/analyses';
import { analysisForPage } from '@/lib/jobs/page-access';
import { CAUTIONS } from '@/lib/methods';
import { loadFindings, signoffOf } from '@/lib/review/findings-store';
import { blockingOf } from '@/lib/review/signoff';
import type { AnalysisSummary } from '@/lib/pipeline';

export const metadata: Metadata = { title: 'Review report' };

const pct = (v: number) => `${Number((v * 100).toPrecision(3))} %`;
const n4 = (v: number) => String(Number(v.toPrecision(4)));
const REPORT_ROWS = 2000;
const MAPS = [
  ['risk', 'Risk (1 = at a limit)'],
  ['predicted-depth', 'Predicted depth'],
  ['effective-density', 'Effective density'],
] as const;

/** The printable review report of one analysis: summary, method, maps, findings with status and waivers, cautions. */
const plural = (n: number, word: string) => `${n.toLocaleString('en')} ${word}${n === 1 ? '' : 's'}`;
// Calibration range ends are fitted numbers with float noise (0.07548250000000001); four significant digits say enough.
const range = (r: number[] | undefined) => (r ? r.map((v) => String(Number(v.toPrecision(4)))).join('–') : '?');

export default async function ReportPage({ params }: { params: Promise<{ analysisId: string }> }) {
  const { analysisId, project } = await analysisForPage((await params).analysisId);
  const db = getDb();
  const view = getAnalysisView(db, analysisId);
  if (view.status !== 'done') return <p className="p-8">This analysis has no results to report: it is {view.status}.</p>;
  const { analysis, items, groups } = loadFindings(db, analysisId);
  const s = analysis.summary as unknown as AnalysisSummary;
  const byKey = new Map(items.map((f) => [f.key, f]));
  const signoff = signoffOf(db, analysisId);
  const { blocking, unlistedErrors } = blockingOf(items, analysis.summary);
  const waived = items.filter((f) => f.waiver);
  const maps = new Set(db.select({ kind: analysisMaps.kind }).from(analysisMaps).where(eq(analysisMaps.analysisId, analysisId)).all().map((m) => m.kind));
  const calibration = (analysis.model as { calibration?: { date?: string; widthUm?: number[]; aspectRatio?: number[]; density?: number[] } }).calibration;
  const h2 = 'mt-8 mb-2 border-b border-ink-300 pb-1 text-base font-semibold break-after-avoid';

  return (
    <article className="mx-auto max-w-4xl px-8 py-8 text-sm leading-relaxed print:max-w-none print:px-0 print:py-0 print:text-[10pt]" data-testid="report">
      <style>{'@page { size: A4; margin: 16mm 14mm; } @media print { a { color: inherit; text-decoration: none; } tr, li { break-inside: avoid; } }'}</style>
      <div className="flex items-start justify-between gap-4">
        <div>
          <p className="text-xs font-semibold tracking-[0.12em] text-copper-600 uppercase">Trenchant review report</p>
          <h1 className="text-2xl font-semibold">{project.name}</h1>
          <p className="font-mono text-xs text-ink-500">
            {view.revision.layoutName} r{view.revision.revision} ({view.revision.originalName}) · analysis {analysisId}
          </p>
        </div>
        <div className="flex items-center gap-3 print:hidden">
          <Link href={`/analyses/${analysisId}`} className="text-sm whitespace-nowrap text-oxide-600 hover:underline">
            Back to the analysis
          </Link>
          <PrintButton />
        </div>
      </div>

      <section className="mt-4 rounded-md border-2 border-warn/60 p-3" data-testid="report-cautions">
        <h2 className="text-sm font-semibold">Read this first</h2>
        <p className="mt-1">
          Everything below is an <strong>advisory estimate</strong> from simplified models. Validate it against <strong>calibration wafers</strong> etched in your fab&apos;s{' '}
          <strong>process of record</strong>; the <strong>foundry&apos;s rules take precedence</strong> over any finding, waiver or sign-off here.
        </p>
        <ul className="mt-2 list-disc space-y-1 pl-5 text-xs text-ink-700">
          {CAUTIONS.map((c) => (
            <li key={c}>{c}</li>
          ))}
        </ul>
      </section>

      <h2 className={h2}>Review status</h2>
      <dl className="grid grid-cols-[max-content_1fr] gap-x-6 gap-y-1 text-xs">
        <dt className="text-ink-500">Sign-off</dt>
        <dd data-testid="report-signoff">
          {signoff
            ? `Signed off by ${signoff.signedByName} on ${signoff.signedAt.toISOString().slice(0, 16).replace('T', ' ')} UTC (model ${signoff.modelName} ${signoff.modelVersion})${signoff.note ? ` — “${signoff.note}”` : ''}`
            : `Not signed off: ${plural(blocking, 'error finding')} open or unwaived${unlistedErrors ? `, ${plural(unlistedErrors, 'error')} not listed (capped list)` : ''}.`}
        </dd>
        <dt className="text-ink-500">Findings</dt>
        <dd>
          {items.length} listed of {s.flags.total} counted ({s.flags.bySeverity.error} errors, {s.flags.bySeverity.warning} warnings); {groups.length} groups;{' '}
          {Object.entries(
            items.reduce<Record<string, number>>((m, f) => ((m[f.status] = (m[f.status] ?? 0) + 1), m), {}),
          )
            .map(([k, v]) => `${v} ${STATUS_LABEL[k as keyof typeof STATUS_LABEL].toLowerCase()}`)
            .join(', ')}
        </dd>
        <dt className="text-ink-500">Analysis</dt>
        <dd>
          started {view.createdAt.slice(0, 16).replace('T', ' ')} UTC{view.createdByName ? ` by ${view.createdByName}` : ''}; report generated {new Date().toISOString().slice(0, 16).replace('T', ' ')} UTC
        </dd>
      </dl>

      <h2 className={h2}>Summary</h2>
      <dl className="grid grid-cols-[max-content_1fr] gap-x-6 gap-y-1 text-xs">
        <dt className="text-ink-500">Global open-area density</dt>
        <dd>{pct(s.globalDensity)}</dd>
        <dt className="text-ink-500">Openings analysed</dt>
        <dd>{s.features.count.toLocaleString('en')}</dd>
        <dt className="text-ink-500">Predicted depth</dt>
        <dd>{s.depth ? `${n4(s.depth.minUm)}–${n4(s.depth.maxUm)} µm (spread ${n4(s.depth.spreadUm)} µm); ${s.depth.reachingTarget} of ${s.features.count} reach the target` : 'no openings'}</dd>
        {s.windows.map((w) => (
          <div key={`${w.windowUm}/${w.stepUm}`} className="contents">
            <dt className="text-ink-500">
              Window density {w.windowUm}/{w.stepUm} µm
            </dt>
            <dd>
              {pct(w.min)} to {pct(w.max)}, mean {pct(w.mean)}
            </dd>
          </div>
        ))}
      </dl>

      <h2 className={h2}>Method</h2>
      <dl className="grid grid-cols-[max-content_1fr] gap-x-6 gap-y-1 text-xs" data-testid="report-method">
        {s.method.map((l) => (
          <div key={l.label} className="contents">
            <dt className="text-ink-500">{l.label}</dt>
            <dd>{l.value}</dd>
          </div>
        ))}
        <dt className="text-ink-500">Calibration</dt>
        <dd>
          {calibration
            ? `dated ${calibration.date ?? '—'}; widths ${range(calibration.widthUm)} µm, aspect ratios ${range(calibration.aspectRatio)}, densities ${range(calibration.density)}`
            : 'the model records no calibration ranges: every prediction is unverified'}
        </dd>
      </dl>

      <h2 className={h2}>Maps</h2>
      <div className="grid grid-cols-3 gap-3">
        {MAPS.filter(([k]) => maps.has(k)).map(([k, title]) => (
          <figure key={k} className="break-inside-avoid">
            <img src={`/api/v1/analyses/${analysisId}/preview.png?map=${k}&size=480`} alt={`${title} map`} className="w-full border border-wafer-300" />
            <figcaption className="mt-1 text-xs text-ink-500">{title}</figcaption>
          </figure>
        ))}
      </div>

      <h2 className={h2}>Findings by group</h2>
      <table className="w-full text-left text-xs" data-testid="report-groups">
        <thead className="text-ink-500">
          <tr>
            <th className="py-1 pr-2">severity</th>
            <th className="py-1 pr-2">kind · cause</th>
            <th className="py-1 pr-2 text-right">count</th>
            <th className="py-1 pr-2">widths</th>
            <th className="py-1">status</th>
          </tr>
        </thead>
        <tbody>
          {groups.map((g) => {
            const counts: Record<string, number> = {};
            for (const k of g.memberKeys) {
              const st = byKey.get(k)?.status ?? 'open';
              counts[st] = (counts[st] ?? 0) + 1;
            }
            return (
              <tr key={g.id} className="border-t border-wafer-200 align-top">
                <td className="py-1 pr-2 font-mono">{g.severity}</td>
                <td className="py-1 pr-2">
                  {g.kind} · {g.cause}
                </td>
                <td className="py-1 pr-2 text-right font-mono">{g.count}</td>
                <td className="py-1 pr-2 font-mono">{g.widthRangeUm ? (n4(g.widthRangeUm[0]) === n4(g.widthRangeUm[1]) ? `${n4(g.widthRangeUm[0])} µm` : `${n4(g.widthRangeUm[0])}–${n4(g.widthRangeUm[1])} µm`) : 'region'}</td>
                <td className="py-1">
                  {Object.entries(counts)
                    .map(([k, v]) => `${v} ${STATUS_LABEL[k as keyof typeof STATUS_LABEL].toLowerCase()}`)
                    .join(', ')}
                </td>
              </tr>
            );
          })}
        </tbody>
      </table>

      <h2 className={h2}>Waivers ({waived.length})</h2>
      {waived.length === 0 ? <p className="text-xs text-ink-500">No finding is waived.</p> : null}
      <ul className="space-y-2 text-xs" data-testid="report-waivers">
        {waived.map((f) => (
          <li key={f.key} className="border-l-2 border-oxide-500 pl-2">
            <p className="font-mono">
              {f.key} · {f.severity} · at {f.atUm.map((v) => v.toFixed(1)).join(', ')} µm
            </p>
            <p>
              Approved by <strong>{f.waiver?.approverName}</strong> on {f.waiver?.at.slice(0, 10)}: {f.waiver?.reason}
            </p>
            {f.waiver?.carriedNote ? <p className="text-ink-500 italic">{f.waiver.carriedNote}</p> : null}
          </li>
        ))}
      </ul>

      <h2 className={h2}>Every finding{items.length > REPORT_ROWS ? ` (first ${REPORT_ROWS} of ${items.length}; the CSV export has all)` : ''}</h2>
      <table className="w-full text-left text-[11px]" data-testid="report-findings">
        <thead className="text-ink-500">
          <tr>
            <th className="py-1 pr-2">key</th>
            <th className="py-1 pr-2">severity</th>
            <th className="py-1 pr-2">at (µm)</th>
            <th className="py-1 pr-2">measured / limit</th>
            <th className="py-1 pr-2">status</th>
            <th className="py-1">assignee</th>
          </tr>
        </thead>
        <tbody>
          {items.slice(0, REPORT_ROWS).map((f) => (
            <tr key={f.key} className="border-t border-wafer-200">
              <td className="py-0.5 pr-2 font-mono">{f.key}</td>
              <td className="py-0.5 pr-2">{f.severity}</td>
              <td className="py-0.5 pr-2 font-mono">{f.atUm.map((v) => v.toFixed(1)).join(', ')}</td>
              <td className="py-0.5 pr-2 font-mono">
                {f.unit === 'fraction' ? `${pct(f.measured)} / ${pct(f.limit)}` : `${n4(f.measured)} / ${n4(f.limit)} ${f.unit === 'ratio' ? ':1' : f.unit}`}
              </td>
              <td className="py-0.5 pr-2">{STATUS_LABEL[f.status]}</td>
              <td className="py-0.5">{f.assignee?.name ?? ''}</td>
            </tr>
          ))}
        </tbody>
      </table>
      <p className="mt-8 border-t border-ink-300 pt-2 text-[10px] text-ink-500">
        Trenchant · advisory estimate · validate against calibration wafers and the process of record · the foundry&apos;s rules take precedence.
      </p>
    </article>
  );
}
