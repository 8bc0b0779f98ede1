'use client';

import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { useRouter } from 'next/navigation';
import { useEffect, useState } from 'react';
import { Button } from '@/components/ui/button';
import { Card } from '@/components/ui/card';
import type { AnalysisView as AnalysisInfo } from '@/lib/jobs/analyses';
import { apiJson, formatWhen } from './api-client';
import { FindingSelectionProvider } from '@/components/analysis/finding-selection';
import { FindingsSection } from '@/components/findings/findings-section';
import { AnalysisCanvasSection } from '@/components/viewer/analysis-canvas-section';
import { QueryProvider } from './query-provider';
import { ProgressBar, StatusBadge } from './status-badge';
import { SummaryPanel, type Summary } from './summary-panel';

type Live = { status: string; stage: string | null; progress: number; errorMessage: string | null };

const STAGE_LABEL: Record<string, string> = {
  starting: 'starting a worker',
  requeued: 'queued again after a restart',
  reading: 'reading the layout',
  coverage: 'open area per pixel',
  'window-density': 'density windows',
  'effective-density': 'effective density (kernel)',
  features: 'finding openings',
  'local-width': 'opening widths',
  prediction: 'predicting etch depth',
  maps: 'painting result maps',
  flags: 'checking limits',
  summary: 'summarising',
  writing: 'writing result maps',
  saving: 'saving results',
};

export function AnalysisView(props: { analysisId: string; initial: AnalysisInfo; canCancel: boolean }) {
  return (
    <QueryProvider>
      <FindingSelectionProvider>
        <View {...props} />
      </FindingSelectionProvider>
    </QueryProvider>
  );
}

/** Follows the analysis over server-sent events; falls back to the status endpoint if the stream drops. */
function useLiveStatus(analysisId: string, initial: Live): Live {
  const [live, setLive] = useState<Live>(initial);
  const queryClient = useQueryClient();
  const terminal = live.status === 'done' || live.status === 'failed' || live.status === 'cancelled';
  useEffect(() => {
    if (terminal) return;
    const source = new EventSource(`/api/v1/analyses/${analysisId}/events`);
    source.addEventListener('progress', (e) => setLive(JSON.parse((e as MessageEvent<string>).data) as Live));
    source.addEventListener('end', () => {
      source.close();
      void queryClient.invalidateQueries({ queryKey: ['analysis', analysisId] });
    });
    return () => source.close();
  }, [analysisId, terminal, queryClient]);
  return live;
}

function View({ analysisId, initial, canCancel }: { analysisId: string; initial: AnalysisInfo; canCancel: boolean }) {
  const live = useLiveStatus(analysisId, { status: initial.status, stage: initial.stage, progress: initial.progress, errorMessage: initial.errorMessage });
  const info = useQuery({
    queryKey: ['analysis', analysisId, 'info', live.status],
    queryFn: () => apiJson<{ analysis: AnalysisInfo }>(`/api/v1/analyses/${analysisId}`),
    initialData: live.status === initial.status ? { analysis: initial } : undefined,
  });
  const results = useQuery({
    queryKey: ['analysis', analysisId, 'results'],
    queryFn: () => apiJson<{ summary: Summary; maps: { name: string; kind: string }[] }>(`/api/v1/analyses/${analysisId}/results?limit=1`),
    enabled: live.status === 'done',
  });
  const cancel = useMutation({ mutationFn: () => apiJson(`/api/v1/analyses/${analysisId}/cancel`, { method: 'POST' }) });
  const a = info.data?.analysis ?? initial;
  const active = live.status === 'queued' || live.status === 'running';

  return (
    <div className="grid grid-cols-1 gap-6">
      <Card className="p-6">
        <div className="flex flex-wrap items-center justify-between gap-4">
          <div className="flex items-center gap-3">
            <StatusBadge status={live.status} />
            <span className="text-sm text-ink-700" data-testid="analysis-stage">
              {live.status === 'running' ? (STAGE_LABEL[live.stage ?? ''] ?? live.stage ?? '') : live.status === 'queued' ? 'waiting for a free worker' : live.status === 'done' ? 'finished' : ''}
            </span>
          </div>
          {canCancel && !active ? <RunAgain analysisId={analysisId} /> : null}
          {canCancel && active ? (
            <Button variant="danger" onClick={() => cancel.mutate()} disabled={cancel.isPending} data-testid="cancel-analysis">
              {cancel.isPending ? 'Cancelling…' : 'Cancel analysis'}
            </Button>
          ) : null}
        </div>
        {active ? (
          <div className="mt-4 space-y-1" data-testid="analysis-progress">
            <ProgressBar value={live.progress} label="analysis progress" />
            <p className="text-right font-mono text-xs text-ink-500">{Math.round(live.progress * 100)} %</p>
          </div>
        ) : null}
        {live.status === 'failed' ? (
          <p role="alert" className="mt-4 rounded-md border border-fail/30 bg-fail/5 px-3 py-2 text-sm text-fail" data-testid="analysis-error">
            {live.errorMessage ?? 'The analysis failed.'}
          </p>
        ) : null}
        {cancel.error ? <p className="mt-2 text-sm text-fail">{cancel.error.message}</p> : null}
        <dl className="mt-4 grid grid-cols-[max-content_1fr] gap-x-6 gap-y-1 font-mono text-xs text-ink-500">
          <dt>layout</dt>
          <dd>
            {a.revision.layoutName} r{a.revision.revision} ({a.revision.originalName})
          </dd>
          <dt>model</dt>
          <dd>
            {a.model.name} · {a.model.version} · {modelSourceText(a.model.source)}
          </dd>
          <dt>started</dt>
          <dd>
            {formatWhen(a.createdAt)}
            {a.createdByName ? ` by ${a.createdByName}` : ''}
          </dd>
          {a.finishedAt ? (
            <>
              <dt>finished</dt>
              <dd>{formatWhen(a.finishedAt)}</dd>
            </>
          ) : null}
          {results.data?.summary.tiled ? (
            <>
              <dt>read in tiles</dt>
              <dd data-testid="analysis-tiled">{tiledText(results.data.summary.tiled)}</dd>
            </>
          ) : null}
        </dl>
      </Card>

      {live.status === 'done' && results.data ? (
        <>
          <SummaryPanel summary={results.data.summary} />
          <AnalysisCanvasSection analysisId={analysisId} />
          <FindingsSection analysisId={analysisId} />
        </>
      ) : null}
      {live.status === 'done' && results.isPending ? <p className="text-sm text-ink-500">Loading results…</p> : null}
      {results.error ? <p className="text-sm text-fail">{results.error.message}</p> : null}
    </div>
  );
}

/** Same revision, stored settings and model, as a new analysis (after a cancel, a failure or to repeat a run). */
function RunAgain({ analysisId }: { analysisId: string }) {
  const router = useRouter();
  const rerun = useMutation({
    mutationFn: () => apiJson<{ analysis: { id: string } }>(`/api/v1/analyses/${analysisId}/rerun`, { method: 'POST' }),
    onSuccess: (data) => router.push(`/analyses/${data.analysis.id}`),
  });
  return (
    <div className="flex items-center gap-3">
      {rerun.error ? <span className="text-xs text-fail">{rerun.error.message}</span> : null}
      <Button variant="secondary" onClick={() => rerun.mutate()} disabled={rerun.isPending} data-testid="run-again">
        {rerun.isPending ? 'Queuing…' : 'Run again'}
      </Button>
    </div>
  );
}

/** One plain line on how a layout too large to read whole was analysed (same results as a whole read). */
function tiledText(t: NonNullable<Summary['tiled']>): string {
  const mib = (n: number) => `${Math.round(n / 1024 / 1024).toLocaleString('en-US')} MiB`;
  const um = (v: number) => `${Math.round(v * 100) / 100} µm`;
  return `${t.tiles.toLocaleString('en-US')} tiles of ${um(t.tileUm)} (${um(t.marginUm)} margin, ${t.rereads} re-read${t.rereads === 1 ? '' : 's'}): the ${mib(t.fileBytes)} file is above the whole-read size of ${mib(t.wholeReadBytes)}${t.via === 'queue' ? '; tiles ran on queue workers' : ''}; results are the same as a whole read`;
}

/** Where the model came from, in words (stored as 'version:<id>', 'builtin:<id>' or 'uploaded'). */
function modelSourceText(source: string): string {
  if (source.startsWith('version:')) return 'published team version';
  if (source.startsWith('builtin:')) return `built-in sample (${source.slice('builtin:'.length)})`;
  if (source === 'uploaded') return 'model document sent with the analysis';
  return source;
}
