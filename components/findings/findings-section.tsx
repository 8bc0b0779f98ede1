'use client';

import { keepPreviousData, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { useEffect, useState } from 'react';
import { useFindingSelection } from '@/components/analysis/finding-selection';
import { apiJson } from '@/components/pipeline/api-client';
import { Button } from '@/components/ui/button';
import { Card } from '@/components/ui/card';
import { BulkBar, type ChangeRequest } from './bulk-bar';
import { FindingDetail } from './finding-detail';
import { FindingsTable } from './findings-table';
import { FindingsToolbar } from './findings-toolbar';
import { SignoffPanel } from './signoff-panel';
import { isGroup, type FindingItem, type FindingsResponse } from './types';
import { apiQuery, PAGE_SIZE, useFindingsUrl } from './use-findings-url';

/**
 * The findings section of the analysis page: grouped findings with filters, search, paging and bulk changes (all
 * state in the URL), the selected finding's thread, sign-off and exports. A row click selects the finding for the
 * canvas; a finding picked on the canvas is located here (page turned, row highlighted and scrolled to).
 */
export function FindingsSection({ analysisId }: { analysisId: string }) {
  const [state, update] = useFindingsUrl();
  const { selected, select } = useFindingSelection();
  const qc = useQueryClient();
  // a link to one finding (?finding=KEY, e.g. from a notification) opens on the page that holds it, like a canvas pick
  const [locate, setLocate] = useState<string | null>(() => state.finding ?? null);
  const [checked, setChecked] = useState<Set<string>>(new Set());

  useEffect(() => {
    if (selected?.source === 'canvas') {
      setLocate(selected.flagId);
      update({ finding: selected.flagId });
    }
  }, [selected]);

  const query = apiQuery(state, locate ? { locate } : {});
  const list = useQuery({
    queryKey: ['findings', analysisId, 'list', query],
    queryFn: () => apiJson<FindingsResponse>(`/api/v1/analyses/${analysisId}/findings?${query}`),
    placeholderData: keepPreviousData,
  });
  const data = list.data;

  // a located row may be on another page: follow the server's page, and stop locating only once the URL shows it
  // (clearing earlier asks for the URL's old page for one fetch, which flashes that page)
  useEffect(() => {
    if (!locate || !data || list.isPlaceholderData) return;
    const page = Math.floor(data.offset / PAGE_SIZE) + 1;
    if (String(page) !== (state.page || '1')) update({ page: page === 1 ? '' : String(page) });
    else setLocate(null);
  }, [data, locate, list.isPlaceholderData, state.page]);
  const [highlight, setHighlight] = useState<string | null>(null);
  useEffect(() => {
    if (data?.located) setHighlight(data.located);
  }, [data?.located]);
  useEffect(() => setChecked(new Set()), [state.view, state.kind, state.severity, state.status, state.layer, state.assignee, state.q]);

  const bulk = useMutation({
    mutationFn: (c: ChangeRequest) => {
      const rows = [...checked];
      const grouped = data?.view === 'groups';
      return apiJson<{ changed: number }>(`/api/v1/analyses/${analysisId}/findings/bulk`, {
        method: 'POST',
        json: { ...(grouped ? { groupIds: rows } : { keys: rows }), ...c },
      });
    },
    onSuccess: () => {
      setChecked(new Set());
      void qc.invalidateQueries({ queryKey: ['findings', analysisId] });
    },
  });

  const pick = (f: FindingItem) => {
    select({ flagId: f.key, xUm: f.atUm[0], yUm: f.atUm[1], bboxUm: f.bboxUm, source: 'table' });
    setHighlight(null);
    update({ finding: f.key });
  };
  const toggle = (id: string, on: boolean) =>
    setChecked((prev) => {
      const next = new Set(prev);
      if (on) next.add(id);
      else next.delete(id);
      return next;
    });

  // the page shown is the page the server answered (a located finding may have turned it before the URL follows)
  const page = data ? Math.floor(data.offset / PAGE_SIZE) + 1 : Number(state.page ?? '1') || 1;
  const pages = data ? Math.max(1, Math.ceil(data.total / PAGE_SIZE)) : 1;
  const canAct = Boolean(data && !data.signoff.signoff && (data.can.triage || data.can.waive || data.can.verify));
  const memberCount = data ? data.items.filter((x) => checked.has(isGroup(x) ? x.id : x.key)).reduce((n, x) => n + (isGroup(x) ? x.count : 1), 0) : 0;

  return (
    <Card className="p-6">
      <div className="mb-3 flex flex-wrap items-baseline justify-between gap-3">
        <h2 className="text-lg font-semibold text-ink-900">
          Findings{' '}
          {data ? (
            <span className="font-mono text-sm font-normal text-ink-500" data-testid="findings-count">
              {data.view === 'groups' ? `${data.total.toLocaleString('en')} group${data.total === 1 ? '' : 's'} · ${(data.findings ?? 0).toLocaleString('en')} finding${data.findings === 1 ? '' : 's'}` : `${data.total.toLocaleString('en')} finding${data.total === 1 ? '' : 's'}`}
            </span>
          ) : null}
        </h2>
      </div>
      {list.error ? <p className="text-sm text-fail">{list.error.message}</p> : null}
      {data ? (
        <>
          <SignoffPanel analysisId={analysisId} data={data} csvQuery={apiQuery(state).replace(/(^|&)(limit|offset)=[^&]*/g, '')} />
          {data.capped ? (
            <p role="note" className="mb-3 rounded-md border border-warn/40 bg-warn/5 px-3 py-2 text-sm text-ink-800" data-testid="capped-note">
              The list is capped: the pipeline counted <strong>{data.counted.toLocaleString('en')}</strong> flags but stored only the{' '}
              <strong>{data.listed.toLocaleString('en')}</strong> worst for review. The summary counts all of them. To review every one, run a new analysis with a higher
              “listed flags” limit (maxListedFlags).
              {data.shortKinds.length ? (
                <span className="mt-1 block text-xs text-ink-700">
                  Not all listed:{' '}
                  {data.shortKinds.map((k) => `${k.kind} ${k.listed.toLocaleString('en')} of ${k.counted.toLocaleString('en')}`).join(' · ')}.
                </span>
              ) : null}
            </p>
          ) : null}
          <FindingsToolbar state={state} update={update} kinds={data.kinds} layers={data.layers} members={data.members} />
          <div className={`mt-3 grid grid-cols-1 gap-4 ${state.finding ? 'xl:grid-cols-[minmax(0,1fr)_22rem]' : ''}`}>
            <div className="min-w-0">
              {canAct ? <BulkBar selectedCount={checked.size} memberCount={memberCount} data={data} pending={bulk.isPending} error={bulk.error?.message ?? null} onApply={(c) => bulk.mutate(c)} onClear={() => setChecked(new Set())} /> : null}
              <FindingsTable analysisId={analysisId} data={data} checked={checked} toggle={toggle} highlight={highlight} openKey={state.finding ?? null} onPick={pick} canAct={canAct} />
              <div className="mt-3 flex items-center justify-end gap-3 text-xs text-ink-500">
                <span data-testid="findings-page">
                  page {Math.min(page, pages)} of {pages}
                </span>
                <Button variant="secondary" onClick={() => update({ page: page - 1 <= 1 ? '' : String(page - 1) })} disabled={page <= 1}>
                  Previous
                </Button>
                <Button variant="secondary" onClick={() => update({ page: String(page + 1) })} disabled={page >= pages}>
                  Next
                </Button>
              </div>
            </div>
            {state.finding ? <FindingDetail key={state.finding} analysisId={analysisId} findingKey={state.finding} data={data} onClose={() => update({ finding: '' })} /> : null}
          </div>
        </>
      ) : list.isPending ? (
        <p className="text-sm text-ink-500">Loading findings…</p>
      ) : null}
    </Card>
  );
}
