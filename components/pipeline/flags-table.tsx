'use client';

import { keepPreviousData, useQuery } from '@tanstack/react-query';
import { createColumnHelper, rowPaginationFeature, tableFeatures, useTable, type PaginationState } from '@tanstack/react-table';
import { useState } from 'react';
import { Button } from '@/components/ui/button';
import { Card } from '@/components/ui/card';
import { useFindingSelection } from '@/components/analysis/finding-selection';
import { apiJson } from './api-client';

type FlagItem = {
  id: string;
  key: string;
  kind: string;
  severity: 'error' | 'warning' | 'info';
  bboxUm: [number, number, number, number];
  atUm: [number, number];
  measured: number;
  limit: number;
  unit: string;
  message: string;
  featureId: number | null;
};
type FlagsPage = { total: number; items: FlagItem[] };

const features = tableFeatures({ rowPaginationFeature });
const helper = createColumnHelper<typeof features, FlagItem>();
const fmt = (v: number) => (Number.isFinite(v) ? String(Number(v.toPrecision(4))) : String(v));
const SEVERITY_TONE: Record<string, string> = { error: 'text-fail', warning: 'text-warn', info: 'text-ink-500' };

const columns = helper.columns([
  helper.accessor('severity', { header: 'Severity', cell: (c) => <span className={`font-mono text-xs font-semibold ${SEVERITY_TONE[c.getValue()] ?? ''}`}>{c.getValue()}</span> }),
  helper.accessor('kind', { header: 'Kind', cell: (c) => <span className="font-mono text-xs whitespace-nowrap">{c.getValue()}</span> }),
  helper.accessor('atUm', { header: 'At (µm)', cell: (c) => <span className="font-mono text-xs whitespace-nowrap">{c.getValue().map((v) => v.toFixed(1)).join(', ')}</span> }),
  helper.accessor('measured', {
    header: 'Measured / limit',
    cell: (c) => (
      <span className="font-mono text-xs whitespace-nowrap">
        {fmt(c.getValue())} / {fmt(c.row.original.limit)} {c.row.original.unit}
      </span>
    ),
  }),
  helper.accessor('message', { header: 'What it means', cell: (c) => <span className="text-xs leading-snug text-ink-700">{c.getValue()}</span> }),
]);
const noRows: FlagItem[] = [];

/** Flags of a finished analysis, worst first, paged on the server. */
export function FlagsTable({ analysisId }: { analysisId: string }) {
  const [pagination, setPagination] = useState<PaginationState>({ pageIndex: 0, pageSize: 25 });
  const [severity, setSeverity] = useState<string>('');
  const { selected, select } = useFindingSelection();
  const query = useQuery({
    queryKey: ['analysis', analysisId, 'flags', pagination, severity],
    queryFn: () =>
      apiJson<FlagsPage>(`/api/v1/analyses/${analysisId}/flags?offset=${pagination.pageIndex * pagination.pageSize}&limit=${pagination.pageSize}${severity ? `&severity=${severity}` : ''}`),
    placeholderData: keepPreviousData,
  });
  const table = useTable({
    features,
    columns,
    data: query.data?.items ?? noRows,
    rowCount: query.data?.total ?? 0,
    state: { pagination },
    onPaginationChange: setPagination,
    manualPagination: true,
    getRowId: (row) => row.id,
  });
  const total = query.data?.total ?? 0;
  const pages = Math.max(1, Math.ceil(total / pagination.pageSize));

  return (
    <Card className="p-6">
      <div className="mb-3 flex flex-wrap items-center justify-between gap-3">
        <h2 className="text-lg font-semibold text-ink-900">
          Flags <span className="font-mono text-sm text-ink-500">({total})</span>
        </h2>
        <div className="flex gap-1">
          {['', 'error', 'warning', 'info'].map((s) => (
            <button
              key={s || 'all'}
              onClick={() => {
                setSeverity(s);
                setPagination((p) => ({ ...p, pageIndex: 0 }));
              }}
              className={`rounded px-2 py-1 text-xs ${severity === s ? 'bg-ink-900 text-wafer-50' : 'text-ink-700 hover:bg-wafer-200/60'}`}
            >
              {s || 'all'}
            </button>
          ))}
        </div>
      </div>
      {query.error ? <p className="text-sm text-fail">{query.error.message}</p> : null}
      <div className="overflow-x-auto">
        <table className="w-full text-left text-sm" data-testid="flags-table">
          <thead className="text-xs text-ink-500">
            {table.getHeaderGroups().map((group) => (
              <tr key={group.id}>
                {group.headers.map((header) => (
                  <th key={header.id} className="py-1.5 pr-4 font-medium">
                    {header.isPlaceholder ? null : <table.FlexRender header={header} />}
                  </th>
                ))}
              </tr>
            ))}
          </thead>
          <tbody>
            {table.getRowModel().rows.map((row) => (
              <tr key={row.id} className={`cursor-pointer border-t border-wafer-200 align-top ${selected?.flagId === row.original.key ? 'bg-copper-300/30' : ''}`} data-testid="flag-row" data-flag-key={row.original.key} onClick={() => select({ flagId: row.original.key, xUm: row.original.atUm[0], yUm: row.original.atUm[1], bboxUm: row.original.bboxUm, source: 'table' })}>
                {row.getAllCells().map((cell) => (
                  <td key={cell.id} className="py-2 pr-4">
                    <table.FlexRender cell={cell} />
                  </td>
                ))}
              </tr>
            ))}
            {total === 0 && !query.isPending ? (
              <tr>
                <td colSpan={columns.length} className="py-3 text-sm text-ink-500">
                  No flags{severity ? ` of severity ${severity}` : ''}.
                </td>
              </tr>
            ) : null}
          </tbody>
        </table>
      </div>
      <div className="mt-3 flex items-center justify-end gap-3 text-xs text-ink-500">
        <span>
          page {pagination.pageIndex + 1} of {pages}
        </span>
        <Button variant="secondary" onClick={() => table.previousPage()} disabled={!table.getCanPreviousPage()}>
          Previous
        </Button>
        <Button variant="secondary" onClick={() => table.nextPage()} disabled={!table.getCanNextPage()}>
          Next
        </Button>
      </div>
    </Card>
  );
}
