import type { Metadata } from 'next';
import Link from 'next/link';
import { CarryWaiversButton } from '@/components/findings/carry-waivers-button';
import { StatusPill, SEVERITY_TONE } from '@/components/findings/status-pill';
import { Card, PageTitle } from '@/components/ui/card';
import { buttonClass } from '@/components/ui/button';
import { getDb } from '@/db/client';
import { can } from '@/lib/auth/permissions';
import { getAnalysisView, listProjectAnalyses } from '@/lib/jobs/analyses';
import { analysisForPage } from '@/lib/jobs/page-access';
import { compareAnalyses, compareQuery, DEFAULT_COMPARE_TOLERANCE_UM } from '@/lib/review/compare-store';
import { signoffOf } from '@/lib/review/findings-store';

export const metadata: Metadata = { title: 'Compare revisions' };

type Brief = { key: string; kind: string; severity: string; atUm: number[]; message: string; status: 'open' | 'needs_change' | 'waived' | 'fixed_later' | 'verified' };

function List({ title, items, testid }: { title: string; items: Brief[]; testid: string }) {
  return (
    <Card className="p-5">
      <h2 className="text-sm font-semibold">
        {title} <span className="font-mono text-ink-500">({items.length})</span>
      </h2>
      <ul className="mt-2 max-h-96 divide-y divide-wafer-200 overflow-y-auto text-xs" data-testid={testid}>
        {items.slice(0, 200).map((f) => (
          <li key={f.key} className="py-1.5">
            <span className={`font-mono font-semibold ${SEVERITY_TONE[f.severity] ?? ''}`}>{f.severity}</span> <span className="font-mono">{f.kind}</span>{' '}
            <span className="font-mono text-ink-500">at {f.atUm.map((v) => v.toFixed(1)).join(', ')} µm</span> <StatusPill status={f.status} />
          </li>
        ))}
        {items.length > 200 ? <li className="py-1.5 text-ink-500">… and {items.length - 200} more (the CSV export lists every finding).</li> : null}
      </ul>
    </Card>
  );
}

/** New / resolved / unchanged findings of this analysis against an earlier analysis of the same project. */
export default async function ComparePage({ params, searchParams }: { params: Promise<{ analysisId: string }>; searchParams: Promise<Record<string, string | undefined>> }) {
  const { analysisId, project, role } = await analysisForPage((await params).analysisId);
  const db = getDb();
  const me = getAnalysisView(db, analysisId);
  const others = listProjectAnalyses(db, project.id).filter((a) => a.id !== analysisId && a.status === 'done');
  const sp = await searchParams;
  const fallback = others.find((a) => a.revision.layoutId === me.revision.layoutId && a.createdAt < me.createdAt) ?? others[0];
  const parsed = compareQuery.safeParse({ with: sp.with ?? fallback?.id ?? '', toleranceUm: sp.toleranceUm ?? String(DEFAULT_COMPARE_TOLERANCE_UM) });
  const label = (a: typeof me) => `${a.revision.layoutName} r${a.revision.revision} · ${a.model.name} ${a.model.version} · ${a.createdAt.slice(0, 16).replace('T', ' ')} UTC`;
  let result: ReturnType<typeof compareAnalyses> | null = null;
  let problem: string | null = null;
  if (!parsed.success) problem = others.length ? 'Choose an earlier analysis to compare with.' : 'This project has no other finished analysis to compare with.';
  else {
    try {
      result = compareAnalyses(db, analysisId, parsed.data.with, parsed.data.toleranceUm);
    } catch (e) {
      problem = e instanceof Error ? e.message : 'Compare failed.';
    }
  }
  return (
    <>
      <PageTitle kicker={<Link href={`/analyses/${analysisId}`} className="hover:underline">{label(me)}</Link>} title="Compare revisions" />
      {/* Without another finished analysis the form would offer an empty choice and a button that does nothing. */}
      {others.length === 0 ? (
        <p className="text-sm text-ink-700" data-testid="compare-none">
          This project has no other finished analysis to compare with. Upload the next revision of the layout and analyse it, then compare the two here.
        </p>
      ) : (
        <Card className="mb-6 p-5">
          <form className="flex flex-wrap items-end gap-3 text-sm" method="get">
            <label className="text-xs text-ink-700">
              Earlier analysis
              <select name="with" defaultValue={parsed.success ? parsed.data.with : ''} className="mt-1 block rounded-md border border-wafer-300 bg-white px-2 py-1.5 text-sm" data-testid="compare-with">
                {others.map((a) => (
                  <option key={a.id} value={a.id}>
                    {label(a)}
                  </option>
                ))}
              </select>
            </label>
            <label className="text-xs text-ink-700">
              Match tolerance (µm)
              <input name="toleranceUm" type="number" min="0" step="any" defaultValue={parsed.success ? parsed.data.toleranceUm : DEFAULT_COMPARE_TOLERANCE_UM} className="mt-1 block w-28 rounded-md border border-wafer-300 bg-white px-2 py-1.5 text-sm" />
            </label>
            <button type="submit" className={buttonClass('secondary')}>
              Compare
            </button>
          </form>
          <p className="mt-3 text-xs text-ink-500">
            Findings match when they have the same kind and their points lie within the tolerance; each finding matches at most one, closest pairs first. A
            finding that moved further than the tolerance counts as resolved in the earlier analysis and new in this one.
          </p>
        </Card>
      )}
      {problem && others.length > 0 ? <p className="text-sm text-ink-700">{problem}</p> : null}
      {result ? (
        <>
          <div className="mb-6 grid grid-cols-3 gap-4" data-testid="compare-counts">
            {(
              [
                ['New', result.counts.added, 'text-fail', 'count-new'],
                ['Resolved', result.counts.resolved, 'text-pass', 'count-resolved'],
                ['Unchanged', result.counts.unchanged, 'text-ink-800', 'count-unchanged'],
              ] as const
            ).map(([t, n, tone, id]) => (
              <Card key={t} className="p-5">
                <p className="text-xs text-ink-500">{t}</p>
                <p className={`font-mono text-3xl ${tone}`} data-testid={id}>
                  {n}
                </p>
              </Card>
            ))}
          </div>
          {/^\d+$/.test(sp.carried ?? '') ? (
            <p className="mb-4 rounded-md border border-pass/30 bg-pass/5 px-3 py-2 text-sm text-ink-800" role="status" data-testid="carried-notice">
              {sp.carried} waiver{sp.carried === '1' ? '' : 's'} carried over; each notes the analysis it came from.
            </p>
          ) : null}
          {result.carriable > 0 && can(role, 'flag.waive') && !signoffOf(db, analysisId) ? (
            <Card className="mb-6 flex flex-wrap items-center justify-between gap-3 p-5">
              <p className="text-sm">
                {result.carriable} unchanged finding{result.carriable === 1 ? ' was' : 's were'} waived in the earlier analysis. Carry the waivers over? Each keeps its reason and
                approver and gets a note saying where it came from.
              </p>
              <CarryWaiversButton analysisId={analysisId} from={result.before.id} toleranceUm={result.toleranceUm} />
            </Card>
          ) : null}
          <div className="grid gap-4 lg:grid-cols-3">
            <List title="New in this analysis" items={result.added} testid="list-new" />
            <List title="Resolved since the earlier one" items={result.resolved} testid="list-resolved" />
            <List title="Unchanged" items={result.unchanged.map((u) => u.after)} testid="list-unchanged" />
          </div>
        </>
      ) : null}
    </>
  );
}
