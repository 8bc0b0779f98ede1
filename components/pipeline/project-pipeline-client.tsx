'use client';

import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import Link from 'next/link';
import { useRouter } from 'next/navigation';
import { describeSettings } from '@/lib/pipeline/settings-label';
import { buttonClass } from '@/components/ui/button';
import { Card } from '@/components/ui/card';
import { apiJson, formatBytes, formatWhen } from './api-client';
import { ProgressBar, StatusBadge } from './status-badge';

type Revision = {
  id: string;
  revision: number;
  originalName: string;
  uploadedAt: string;
  uploadedByName: string | null;
  sizeBytes: number;
  format: string;
  layers: { layer: number; datatype: number; polygons: number }[];
  polygonCount: number;
  sha256: string;
  note: string;
  readWarnings: string[];
  /** Above the whole-read size: checked from its index, analysed in tiles. */
  readsThroughIndex?: boolean;
  analysisCount: number;
};
type Layout = { id: string; name: string; revisions: Revision[] };
type Analysis = {
  id: string;
  status: string;
  stage: string | null;
  progress: number;
  createdAt: string;
  createdByName: string | null;
  errorMessage: string | null;
  revision: { layoutName: string; revision: number };
  model: { name: string; version: string };
  settings: Record<string, unknown>;
};

export function ProjectPipelineClient({ projectId, canUpload, canAnalyse }: { projectId: string; canUpload: boolean; canAnalyse: boolean }) {
  const layouts = useQuery({ queryKey: ['layouts', projectId], queryFn: () => apiJson<{ layouts: Layout[] }>(`/api/v1/projects/${projectId}/layouts`) });
  const analyses = useQuery({
    queryKey: ['analyses', projectId],
    queryFn: () => apiJson<{ analyses: Analysis[] }>(`/api/v1/projects/${projectId}/analyses`),
    // Poll while something is still queued or running, so the list settles without a reload.
    refetchInterval: (q) => (q.state.data?.analyses.some((a) => a.status === 'queued' || a.status === 'running') ? 2_000 : false),
  });

  return (
    <div className="mt-6 grid grid-cols-1 gap-6" data-testid="project-pipeline">
      <Card className="p-6">
        <div className="mb-4 flex items-center justify-between gap-4">
          <h2 className="text-lg font-semibold text-ink-900">Layouts</h2>
          {canUpload ? (
            <Link href={`/projects/${projectId}/upload`} className={buttonClass('primary')} data-testid="upload-link">
              Upload layout
            </Link>
          ) : null}
        </div>
        {layouts.isPending ? <p className="text-sm text-ink-500">Loading layouts…</p> : null}
        {layouts.error ? <p className="text-sm text-fail">{layouts.error.message}</p> : null}
        {layouts.data && layouts.data.layouts.length === 0 ? (
          <p className="text-sm text-ink-500">No layout yet. {canUpload ? 'Upload a GDSII stream or a polygon CSV to start.' : 'A designer uploads layouts.'}</p>
        ) : null}
        <ul className="space-y-5">
          {layouts.data?.layouts.map((l) => (
            <li key={l.id}>
              <h3 className="text-sm font-semibold text-ink-800">{l.name}</h3>
              <div className="overflow-x-auto">
                <table className="mt-2 w-full min-w-[34rem] text-left text-sm">
                  <thead className="text-xs text-ink-500">
                    <tr>
                      <th className="py-1 pr-3 font-medium">rev</th>
                      <th className="py-1 pr-3 font-medium">file</th>
                      <th className="py-1 pr-3 font-medium">layers</th>
                      <th className="py-1 pr-3 font-medium">uploaded</th>
                      <th className="py-1 pr-3 font-medium">analyses</th>
                      <th className="py-1" />
                    </tr>
                  </thead>
                  <tbody>
                    {l.revisions.map((r) => (
                      <tr key={r.id} className="border-t border-wafer-200">
                        <td className="py-1.5 pr-3 font-mono text-xs">r{r.revision}</td>
                        <td className="py-1.5 pr-3">
                          <span className="text-ink-800">{r.originalName}</span>
                          <span className="ml-2 font-mono text-xs text-ink-500">
                            {r.format} · {formatBytes(r.sizeBytes)} · {r.polygonCount.toLocaleString('en')} polygons
                            {r.readsThroughIndex ? <span data-testid="revision-large"> · large file: read in tiles</span> : null}
                          </span>
                          {r.readWarnings.length > 0 ? (
                            <details className="mt-0.5 text-xs text-warn" data-testid="revision-read-warnings">
                              <summary className="cursor-pointer">
                                {r.readWarnings.length} repair{r.readWarnings.length === 1 ? '' : 's'} while reading — check the drawing
                              </summary>
                              <ul className="mt-1 list-disc pl-5 font-mono text-[11px] text-ink-700">
                                {r.readWarnings.map((w) => (
                                  <li key={w}>{w}</li>
                                ))}
                              </ul>
                            </details>
                          ) : null}
                          {r.note ? (
                            <p className="mt-0.5 text-xs text-ink-600 italic" data-testid="revision-note">
                              {r.note}
                            </p>
                          ) : null}
                        </td>
                        <td className="py-1.5 pr-3 font-mono text-xs text-ink-700">{r.layers.map((x) => `${x.layer}/${x.datatype}`).join(' ')}</td>
                        <td className="py-1.5 pr-3 text-xs text-ink-500">
                          {formatWhen(r.uploadedAt)}
                          {r.uploadedByName ? ` · ${r.uploadedByName}` : ''}
                        </td>
                        <td className="py-1.5 pr-3 font-mono text-xs">{r.analysisCount}</td>
                        <td className="py-1.5 text-right">
                          {canAnalyse ? (
                            <Link href={`/projects/${projectId}/analyses/new?revision=${r.id}`} className="text-xs font-medium text-copper-600 hover:underline">
                              Analyse…
                            </Link>
                          ) : null}
                        </td>
                      </tr>
                    ))}
                  </tbody>
                </table>
              </div>
            </li>
          ))}
        </ul>
      </Card>

      <Card className="p-6">
        <h2 className="mb-4 text-lg font-semibold text-ink-900">Analyses</h2>
        {analyses.isPending ? <p className="text-sm text-ink-500">Loading analyses…</p> : null}
        {analyses.error ? <p className="text-sm text-fail">{analyses.error.message}</p> : null}
        {analyses.data && analyses.data.analyses.length === 0 ? <p className="text-sm text-ink-500">No analysis yet.</p> : null}
        {analyses.data && analyses.data.analyses.length > 0 ? (
          <div className="overflow-x-auto">
            <table className="w-full min-w-[34rem] text-left text-sm" data-testid="analyses-table">
              <thead className="text-xs text-ink-500">
                <tr>
                  <th className="py-1 pr-3 font-medium">layout</th>
                  <th className="py-1 pr-3 font-medium">model</th>
                  <th className="py-1 pr-3 font-medium">status</th>
                  <th className="py-1 pr-3 font-medium">started</th>
                  <th className="py-1" />
                </tr>
              </thead>
              <tbody>
                {analyses.data.analyses.map((a) => (
                  <tr key={a.id} className="border-t border-wafer-200 align-middle">
                    <td className="py-2 pr-3">
                      <Link href={`/analyses/${a.id}`} className="font-medium text-copper-700 hover:underline">
                        {a.revision.layoutName} r{a.revision.revision}
                      </Link>
                      <p className="mt-0.5 font-mono text-[11px] text-ink-500" data-testid="analysis-settings-label">
                        {describeSettings(a.settings)}
                      </p>
                    </td>
                    <td className="py-2 pr-3 text-xs text-ink-700">
                      {a.model.name} <span className="font-mono text-ink-500">{a.model.version}</span>
                    </td>
                    <td className="py-2 pr-3">
                      <div className="flex items-center gap-3">
                        <StatusBadge status={a.status} />
                        {a.status === 'running' ? (
                          <div className="w-32">
                            <ProgressBar value={a.progress} />
                          </div>
                        ) : null}
                        {a.status === 'failed' && a.errorMessage ? <span className="max-w-md truncate text-xs text-fail" title={a.errorMessage}>{a.errorMessage}</span> : null}
                      </div>
                    </td>
                    <td className="py-2 pr-3 text-xs text-ink-500">
                      {formatWhen(a.createdAt)}
                      {a.createdByName ? ` · ${a.createdByName}` : ''}
                    </td>
                    <td className="py-2 text-right">{canAnalyse && a.status !== 'queued' && a.status !== 'running' ? <RunAgainButton analysisId={a.id} projectId={projectId} /> : null}</td>
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
        ) : null}
      </Card>
    </div>
  );
}

/** Queues the same revision again with the stored settings and model, then opens the new analysis. */
function RunAgainButton({ analysisId, projectId }: { analysisId: string; projectId: string }) {
  const router = useRouter();
  const queryClient = useQueryClient();
  const rerun = useMutation({
    mutationFn: () => apiJson<{ analysis: { id: string } }>(`/api/v1/analyses/${analysisId}/rerun`, { method: 'POST' }),
    onSuccess: (data) => {
      void queryClient.invalidateQueries({ queryKey: ['analyses', projectId] });
      router.push(`/analyses/${data.analysis.id}`);
    },
  });
  return (
    <span className="inline-flex flex-col items-end">
      <button type="button" onClick={() => rerun.mutate()} disabled={rerun.isPending} className="text-xs font-medium text-copper-600 hover:underline disabled:opacity-50" data-testid="run-again">
        {rerun.isPending ? 'Queuing…' : 'Run again'}
      </button>
      {rerun.error ? <span className="max-w-48 text-[11px] text-fail">{rerun.error.message}</span> : null}
    </span>
  );
}
