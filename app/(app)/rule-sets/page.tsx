import type { Metadata } from 'next';
import Link from 'next/link';
import { RuleSetEditor } from '@/components/models/rule-set-editor';
import { Card, PageTitle } from '@/components/ui/card';
import { getDb } from '@/db/client';
import { can, rolesAllowedText } from '@/lib/auth/permissions';
import { requireUser } from '@/lib/auth/session';
import { listMyTeams } from '@/lib/data/teams';
import { listRuleSets, type RuleSetView } from '@/lib/models/rule-sets';

export const metadata: Metadata = { title: 'Rule sets' };

const pct = (v: number | null) => (v === null ? 'not checked' : `${Number((v * 100).toPrecision(4))} %`);
const val = (v: number | null, unit: string, none: string) => (v === null ? none : `${v}${unit}`);

function RuleSummary({ r }: { r: RuleSetView }) {
  const l = r.rules.limits;
  const rows: [string, string][] = [
    ['Density windows', r.rules.densityWindows.map((w) => `${w.windowUm}/${w.stepUm} µm`).join(', ') + ` (${r.rules.windowEdge} edges)`],
    ['Window density', `min ${pct(l.minDensity)}, max ${pct(l.maxDensity)}`],
    ['Density step between neighbours', pct(l.maxGradient)],
    ['Minimum opening width', val(l.minWidthUm, ' µm', 'not checked')],
    ['Maximum aspect ratio', val(l.maxAspectRatio, '', "the model's")],
    ['Kernel length', val(r.rules.kernel.lengthUm, ' µm', "the model's loading length")],
    ['Stop-layer over-etch budget', val(l.stopOverEtchBudgetUm, ' µm', 'not checked')],
  ];
  return (
    <dl className="grid grid-cols-[14rem_1fr] gap-x-4 gap-y-1 text-sm">
      {rows.map(([k, v]) => (
        <div key={k} className="contents">
          <dt className="text-ink-500">{k}</dt>
          <dd className="text-ink-900">{v}</dd>
        </div>
      ))}
    </dl>
  );
}

export default async function RuleSetsPage() {
  const user = await requireUser();
  const teams = await listMyTeams(user);
  return (
    <>
      <PageTitle kicker={<Link href="/models" className="hover:underline">Process models</Link>} title="Rule sets" />
      <p className="-mt-3 mb-6 max-w-3xl text-sm text-ink-500">
        Saved density windows, kernel and limits that designers pick when they start an analysis. The foundry&rsquo;s rule manual and sign-off deck take precedence:
        copy their values here and say where they come from.
      </p>
      {teams.map((team) => {
        const sets = listRuleSets(getDb(), team.id);
        const editable = can(team.myRole, 'model.publish');
        return (
          <section key={team.id} className="mb-8 space-y-4">
            <h2 className="text-lg font-semibold text-ink-900">{team.name}</h2>
            {!editable ? <p className="text-xs text-ink-500">Editing rule sets needs the {rolesAllowedText('model.publish')} role.</p> : null}
            {sets.length === 0 ? <Card className="p-6 text-sm text-ink-500">No rule sets yet.</Card> : null}
            {sets.map((r) => (
              <Card key={r.id} className="space-y-3 p-5">
                <div className="flex items-baseline gap-2">
                  <h3 className="font-semibold text-ink-900" data-testid="rule-set-name">{r.name}</h3>
                  {r.isDefault ? <span className="rounded bg-oxide-500/12 px-1.5 py-0.5 text-[11px] text-oxide-600 ring-1 ring-oxide-500/30">default</span> : null}
                </div>
                {r.description ? <p className="text-sm text-ink-500">{r.description}</p> : null}
                <RuleSummary r={r} />
                {editable ? (
                  <details>
                    <summary className="cursor-pointer text-sm text-copper-700">Edit…</summary>
                    <div className="mt-3">
                      <RuleSetEditor teamId={team.id} ruleSet={r} />
                    </div>
                  </details>
                ) : null}
              </Card>
            ))}
            {editable ? (
              <Card className="p-5">
                <h3 className="mb-3 text-sm font-semibold text-ink-900">New rule set</h3>
                <RuleSetEditor teamId={team.id} />
              </Card>
            ) : null}
          </section>
        );
      })}
    </>
  );
}
