import type { Metadata } from 'next';
import Link from 'next/link';
import { NewModelForm } from '@/components/models/new-model-form';
import { Card, PageTitle } from '@/components/ui/card';
import { getDb } from '@/db/client';
import { can } from '@/lib/auth/permissions';
import { requireUser } from '@/lib/auth/session';
import { listMyTeams } from '@/lib/data/teams';
import { listBuiltinModels } from '@/lib/jobs/models';
import { listTeamModels } from '@/lib/models/versions';

export const metadata: Metadata = { title: 'Process models' };

const day = new Intl.DateTimeFormat('en-GB', { day: 'numeric', month: 'short', year: 'numeric', timeZone: 'UTC' });

export default async function ModelsPage() {
  const user = await requireUser();
  const teams = await listMyTeams(user);
  const samples = listBuiltinModels();
  return (
    <>
      <PageTitle kicker="Process models" title="Models and versions" />
      <p className="-mt-3 mb-6 max-w-3xl text-sm text-ink-500">
        Each analysis uses one published model version; published versions never change. Process engineers draft new versions, calibrate them on measured depths
        and publish them. Predictions are estimates: validate them on calibration wafers from your fab&rsquo;s process of record.
      </p>
      {teams.length === 0 ? <Card className="p-8 text-sm text-ink-500">You are not in a team yet.</Card> : null}
      {teams.map((team) => {
        const models = listTeamModels(getDb(), team.id);
        const editable = can(team.myRole, 'model.publish');
        return (
          <section key={team.id} className="mb-8 space-y-4" data-testid={`team-models-${team.id}`}>
            <div className="flex items-baseline justify-between">
              <h2 className="text-lg font-semibold text-ink-900">{team.name}</h2>
              <Link href="/rule-sets" className="text-sm text-copper-600 hover:underline">
                Rule sets →
              </Link>
            </div>
            {models.length === 0 ? <Card className="p-6 text-sm text-ink-500">No models yet{editable ? ': start one from a sample below.' : '; a process engineer can create them.'}</Card> : null}
            <div className="grid gap-4 md:grid-cols-2">
              {models.map((m) => (
                <Card key={m.id} className="p-5">
                  <div className="flex items-start justify-between gap-3">
                    <div>
                      <h3 className="font-semibold text-ink-900">{m.name}</h3>
                      <p className="font-mono text-[11px] text-ink-500">
                        {m.key} · {m.mode} · for {m.featureKind === 'hole' ? 'holes / vias' : 'trenches'}
                      </p>
                    </div>
                  </div>
                  {m.description ? <p className="mt-2 line-clamp-2 text-sm text-ink-500">{m.description}</p> : null}
                  <ul className="mt-3 divide-y divide-wafer-100 text-sm" data-testid={`versions-${m.key}`}>
                    {m.versions.map((v) => (
                      <li key={v.id} className="flex items-center justify-between gap-2 py-1.5">
                        <Link href={`/models/versions/${v.id}`} className="font-medium text-copper-700 hover:underline">
                          v{v.number}
                        </Link>
                        <span className={`rounded px-1.5 py-0.5 text-[11px] ${v.status === 'draft' ? 'bg-warn/15 text-warn' : 'bg-pass/10 text-pass'}`}>{v.status}</span>
                        <span className="flex-1 text-xs text-ink-500">
                          {v.calibrationDate ? `calibrated ${v.calibrationDate}${v.rSquared !== null ? `, R² ${v.rSquared.toFixed(3)}` : ''}` : 'uncalibrated'}
                          {v.editedSinceCalibration.length > 0 ? <span className="ml-1 font-medium text-warn" data-testid="edited-since-calibration">· edited since, fit no longer applies</span> : null}
                        </span>
                        <span className="text-xs text-ink-500">{day.format(new Date(v.publishedAt ?? v.createdAt))}</span>
                      </li>
                    ))}
                  </ul>
                </Card>
              ))}
            </div>
            {editable ? (
              <Card className="p-5">
                <h3 className="mb-3 text-sm font-semibold text-ink-900">New model</h3>
                <NewModelForm
                  teamId={team.id}
                  sources={[
                    ...models.flatMap((m) => m.versions.map((v) => ({ value: `version:${v.id}`, label: `${m.name} v${v.number}${v.status === 'draft' ? ' (draft)' : ''}` }))),
                    ...samples.map((s) => ({ value: `sample:${s.id}`, label: `Sample: ${s.name}` })),
                  ]}
                />
              </Card>
            ) : null}
          </section>
        );
      })}
    </>
  );
}
