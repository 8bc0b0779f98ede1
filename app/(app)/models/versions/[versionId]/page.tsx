import type { Metadata } from 'next';
import Link from 'next/link';
import { notFound } from 'next/navigation';
import { CalibrationPanel } from '@/components/models/calibration-panel';
import { DensityLimitsPanel } from '@/components/models/density-limits-panel';
import { DraftForm } from '@/components/models/draft-form';
import { ParameterTable } from '@/components/models/parameter-table';
import { VersionActions } from '@/components/models/version-actions';
import { WidthRulesPanel } from '@/components/models/width-rules-panel';
import { Card, PageTitle } from '@/components/ui/card';
import { getDb } from '@/db/client';
import { teamRoleOf } from '@/lib/auth/guard';
import { can, rolesAllowedText } from '@/lib/auth/permissions';
import { requireUser } from '@/lib/auth/session';
import { idParam } from '@/lib/data/schemas';
import { isApiError } from '@/lib/http/errors';
import { editedSinceCalibration } from '@/lib/models/calibration-drift';
import { diffVersions, getVersion, listTeamModels, versionTeamId } from '@/lib/models/versions';

export const metadata: Metadata = { title: 'Model version' };

function Section({ title, children, testId }: { title: string; children: React.ReactNode; testId?: string }) {
  return (
    <Card className="p-5">
      <h2 className="mb-3 text-base font-semibold text-ink-900" data-testid={testId}>
        {title}
      </h2>
      {children}
    </Card>
  );
}

// Six significant digits: fitted values carry float noise (3.6633096781354544) that is not precision.
const show = (v: unknown) => (v === null || v === undefined ? '—' : typeof v === 'number' ? String(Number(v.toPrecision(6))) : String(v));

export default async function ModelVersionPage({ params, searchParams }: { params: Promise<{ versionId: string }>; searchParams: Promise<{ against?: string }> }) {
  const user = await requireUser();
  const parsed = idParam.safeParse((await params).versionId);
  if (!parsed.success) notFound();
  const db = getDb();
  let teamId: string;
  try {
    teamId = versionTeamId(db, parsed.data);
  } catch (e) {
    if (isApiError(e)) notFound();
    throw e;
  }
  const role = teamRoleOf(user.id, teamId);
  if (!role) notFound();
  const version = getVersion(db, parsed.data);
  const editable = can(role, 'model.publish');
  const isDraft = version.status === 'draft';
  const siblings = listTeamModels(db, teamId).find((m) => m.id === version.modelId)?.versions ?? [];
  const wanted = (await searchParams).against;
  const againstId = siblings.some((s) => s.id === wanted && s.id !== version.id) ? (wanted as string) : version.basedOnVersionId;
  const diff = againstId && siblings.some((s) => s.id === againstId) ? diffVersions(db, againstId, version.id) : null;

  const drift = editedSinceCalibration(version.document);
  return (
    <div className="space-y-5">
      <PageTitle
        kicker={
          <Link href="/models" className="hover:underline">
            Process models
          </Link>
        }
        title={`${version.model.name} — v${version.number}`}
        actions={editable ? <VersionActions versionId={version.id} status={version.status} label={`v${version.number}`} /> : null}
      />
      <div className="-mt-3 flex flex-wrap items-center gap-3 text-sm text-ink-500" data-testid="version-status">
        <span className={`rounded px-2 py-0.5 text-xs font-medium ${isDraft ? 'bg-warn/15 text-warn' : 'bg-pass/10 text-pass'}`}>{isDraft ? 'Draft — not used by analyses until published' : 'Published — read only'}</span>
        <span>
          {version.model.mode} · for {version.model.featureKind === 'hole' ? 'holes / vias' : 'trenches'} · created {version.createdAt.slice(0, 10)}
          {version.createdByName ? ` by ${version.createdByName}` : ''}
          {version.publishedAt ? ` · published ${version.publishedAt.slice(0, 10)}` : ''}
        </span>
        {!editable ? <span className="text-xs">Editing needs the {rolesAllowedText('model.publish')} role.</span> : null}
      </div>
      {version.document.description ? <p className="max-w-4xl text-sm text-ink-700">{version.document.description}</p> : null}
      {version.note ? <p className="max-w-4xl text-sm text-ink-500">Note: {version.note}</p> : null}
      {drift.length > 0 ? (
        <p role="note" className="max-w-4xl rounded-md border border-warn/40 bg-warn/10 px-3 py-2 text-sm text-ink-900" data-testid="calibration-drift">
          <span className="font-semibold">Edited after calibration.</span>{' '}
          {drift.map((d) => `${d.label} is ${show(d.current)}${d.unit ? ` ${d.unit}` : ''} here; the fit gave ${show(d.fitted)}`).join('; ')}. The calibration record (date, R², calibrated
          ranges, depth uncertainty) describes the fitted values, not this version&rsquo;s: calibrate {isDraft ? 'this draft' : 'a new draft'} again on measured depths, or treat
          its predictions as uncalibrated.
        </p>
      ) : null}

      <Section title={isDraft && editable ? 'Parameters (draft)' : 'Parameters'}>
        {isDraft && editable ? <DraftForm key={version.updatedAt} versionId={version.id} document={version.document} /> : <ParameterTable document={version.document} />}
      </Section>

      <Section title="Calibration" testId="calibration-heading">
        <CalibrationPanel versionId={version.id} document={version.document} stored={version.calibration} editable={isDraft && editable} />
      </Section>

      <Section title="Width rules">
        <WidthRulesPanel versionId={version.id} defaultTargetUm={version.document.etch.targetDepthUm} defaultKind={version.model.featureKind} />
      </Section>

      <Section title="Density limits">
        <DensityLimitsPanel versionId={version.id} defaultTargetUm={version.document.etch.targetDepthUm} defaultKind={version.model.featureKind} />
      </Section>

      <Section title="Changes between versions">
        {siblings.length > 1 ? (
          <form className="mb-3 flex items-center gap-2 text-sm" method="get">
            <label htmlFor="against" className="text-ink-700">
              Compare v{version.number} with
            </label>
            <select id="against" name="against" defaultValue={againstId ?? ''} className="rounded-md border border-wafer-300 bg-white px-2 py-1 text-sm">
              {siblings
                .filter((s) => s.id !== version.id)
                .map((s) => (
                  <option key={s.id} value={s.id}>
                    {s.label}
                  </option>
                ))}
            </select>
            <button type="submit" className="rounded-md px-2.5 py-1 text-sm ring-1 ring-wafer-300 hover:bg-wafer-50">
              Compare
            </button>
          </form>
        ) : null}
        {diff ? (
          diff.changes.length === 0 ? (
            <p className="text-sm text-ink-500">No parameter differs from {diff.from.label}.</p>
          ) : (
            <table className="w-full text-sm" data-testid="version-diff">
              <thead>
                <tr className="border-b border-wafer-200 text-left text-xs text-ink-500">
                  <th className="py-1.5 font-medium">Parameter</th>
                  <th className="py-1.5 text-right font-medium">{diff.from.label}</th>
                  <th className="py-1.5 text-right font-medium">{diff.to.label}</th>
                  <th className="py-1.5 pl-3 font-medium">Unit</th>
                </tr>
              </thead>
              <tbody>
                {diff.changes.map((c) => (
                  <tr key={c.path} className="border-b border-wafer-100">
                    <td className="py-1.5">
                      {c.label}
                      {c.label !== c.path ? <span className="ml-1 font-mono text-[10px] text-ink-500">{c.path}</span> : null}
                    </td>
                    <td className="py-1.5 text-right font-mono text-ink-500">{show(c.before)}</td>
                    <td className="py-1.5 text-right font-mono">{show(c.after)}</td>
                    <td className="py-1.5 pl-3 text-xs text-ink-500">{c.unit}</td>
                  </tr>
                ))}
              </tbody>
            </table>
          )
        ) : (
          <p className="text-sm text-ink-500">This is the model&rsquo;s first version.</p>
        )}
      </Section>
    </div>
  );
}
