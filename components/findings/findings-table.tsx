'use client';

import { keepPreviousData, useQuery } from '@tanstack/react-query';
import { Fragment, useEffect, useRef, useState } from 'react';
import { apiJson } from '@/components/pipeline/api-client';
import { SEVERITY_TONE, StatusPill } from './status-pill';
import { isGroup, type FindingItem, type FindingsResponse, type GroupRow } from './types';

const fmt = (v: number) => (Number.isFinite(v) ? String(Number(v.toPrecision(4))) : String(v));
export const measuredText = (f: FindingItem) =>
  f.unit === 'fraction'
    ? `${fmt(f.measured * 100)} % / ${fmt(f.limit * 100)} %`
    : f.unit === 'ratio'
      ? `${fmt(f.measured)}:1 / ${fmt(f.limit)}:1`
      : `${fmt(f.measured)} / ${fmt(f.limit)} ${f.unit}`;

type Props = {
  analysisId: string;
  data: FindingsResponse;
  checked: Set<string>;
  toggle: (rowId: string, on: boolean) => void;
  highlight: string | null;
  openKey: string | null;
  onPick: (f: FindingItem) => void;
  canAct: boolean;
};

/** The findings rows: one per group (expandable into its members, fetched on demand) or one per finding. */
export function FindingsTable(props: Props) {
  const { data } = props;
  const [expanded, setExpanded] = useState<string | null>(null);
  const highlightRef = useRef<HTMLTableRowElement | null>(null);
  useEffect(() => {
    if (props.highlight) highlightRef.current?.scrollIntoView({ block: 'center', behavior: 'smooth' });
  }, [props.highlight, data]);
  const grouped = data.view === 'groups';
  const all = data.items.map((x) => (isGroup(x) ? x.id : x.key));
  const allChecked = all.length > 0 && all.every((id) => props.checked.has(id));

  return (
    <div className="overflow-x-auto">
      <table className="w-full min-w-[36rem] text-left text-sm" data-testid="findings-table">
        <thead className="text-xs text-ink-500">
          <tr>
            {props.canAct ? (
              <th className="w-8 py-1.5">
                <input type="checkbox" aria-label="Check every row on this page" checked={allChecked} onChange={(e) => all.forEach((id) => props.toggle(id, e.target.checked))} />
              </th>
            ) : null}
            <th className="py-1.5 pr-3 font-medium">Severity</th>
            <th className="py-1.5 pr-3 font-medium">Kind · cause</th>
            {grouped ? <th className="py-1.5 pr-3 text-right font-medium">Count</th> : <th className="py-1.5 pr-3 font-medium">At (µm)</th>}
            <th className="py-1.5 pr-3 font-medium">{grouped ? 'Widths / worst' : 'Measured / limit'}</th>
            <th className="py-1.5 pr-3 font-medium">Status</th>
            <th className="py-1.5 pr-3 font-medium">Assignee</th>
          </tr>
        </thead>
        <tbody>
          {data.items.map((x) => {
            const rowId = isGroup(x) ? x.id : x.key;
            const lit = props.highlight === rowId;
            if (isGroup(x)) {
              const open = expanded === x.id;
              return (
                <Fragment key={rowId}>
                  <tr
                    ref={lit ? highlightRef : undefined}
                    data-row-id={rowId}
                    data-testid="finding-group-row"
                    aria-selected={lit}
                    tabIndex={0}
                    aria-expanded={open}
                    onClick={() => {
                      setExpanded(open ? null : x.id);
                      props.onPick(x.first);
                    }}
                    onKeyDown={(e) => {
                      if (e.key !== 'Enter' && e.key !== ' ') return;
                      e.preventDefault();
                      setExpanded(open ? null : x.id);
                      props.onPick(x.first);
                    }}
                    className={`cursor-pointer border-t border-wafer-200 align-top hover:bg-wafer-50 ${lit ? 'bg-copper-300/20 ring-2 ring-copper-400 ring-inset' : ''}`}
                  >
                    {props.canAct ? (
                      <td className="py-2" onClick={(e) => e.stopPropagation()}>
                        <input type="checkbox" aria-label={`Check group ${x.kind}`} checked={props.checked.has(rowId)} onChange={(e) => props.toggle(rowId, e.target.checked)} />
                      </td>
                    ) : null}
                    <td className={`py-2 pr-3 font-mono text-xs font-semibold ${SEVERITY_TONE[x.severity] ?? ''}`}>{x.severity}</td>
                    <td className="py-2 pr-3">
                      <span className="font-mono text-xs">
                        {open ? '▾' : '▸'} {x.kind}
                      </span>
                      <span className="block text-xs text-ink-500">{x.cause}</span>
                    </td>
                    <td className="py-2 pr-3 text-right font-mono text-xs" data-testid="group-count">
                      {x.matching === x.count ? x.count.toLocaleString('en') : `${x.matching.toLocaleString('en')} of ${x.count.toLocaleString('en')}`}
                    </td>
                    <td className="py-2 pr-3 font-mono text-xs whitespace-nowrap">
                      {x.widthRangeUm ? (fmt(x.widthRangeUm[0]) === fmt(x.widthRangeUm[1]) ? `${fmt(x.widthRangeUm[0])} µm` : `${fmt(x.widthRangeUm[0])}–${fmt(x.widthRangeUm[1])} µm`) : 'region'}
                      <span className="block text-ink-500">worst {measuredText(x.first)}</span>
                    </td>
                    <td className="py-2 pr-3">
                      <StatusPill status={x.status} />
                    </td>
                    <td className="py-2 pr-3 text-xs text-ink-700">{x.assignees.join(', ') || '—'}</td>
                  </tr>
                  {open ? <GroupMembers analysisId={props.analysisId} group={x} colSpan={props.canAct ? 7 : 6} openKey={props.openKey} onPick={props.onPick} /> : null}
                </Fragment>
              );
            }
            return (
              <tr
                key={rowId}
                ref={lit ? highlightRef : undefined}
                data-row-id={rowId}
                data-flag-key={x.key}
                data-testid="finding-row"
                aria-selected={lit}
                tabIndex={0}
                onClick={() => props.onPick(x)}
                onKeyDown={(e) => {
                  if (e.key !== 'Enter' && e.key !== ' ') return;
                  e.preventDefault();
                  props.onPick(x);
                }}
                className={`cursor-pointer border-t border-wafer-200 align-top hover:bg-wafer-50 ${lit || props.openKey === x.key ? 'bg-copper-300/20 ring-2 ring-copper-400 ring-inset' : ''}`}
              >
                {props.canAct ? (
                  <td className="py-2" onClick={(e) => e.stopPropagation()}>
                    <input type="checkbox" aria-label={`Check finding ${x.key}`} checked={props.checked.has(rowId)} onChange={(e) => props.toggle(rowId, e.target.checked)} />
                  </td>
                ) : null}
                <td className={`py-2 pr-3 font-mono text-xs font-semibold ${SEVERITY_TONE[x.severity] ?? ''}`}>{x.severity}</td>
                <td className="min-w-64 py-2 pr-3">
                  <span className="font-mono text-xs">{x.kind}</span>
                  <span className="line-clamp-2 max-w-md text-xs leading-snug text-ink-500" title={x.message}>
                    {x.message}
                  </span>
                </td>
                <td className="py-2 pr-3 font-mono text-xs whitespace-nowrap">{x.atUm.map((v) => v.toFixed(1)).join(', ')}</td>
                <td className="py-2 pr-3 font-mono text-xs whitespace-nowrap">
                  {measuredText(x)}
                  {x.uncertain ? (
                    <span className="ml-1.5 rounded border border-warn/40 px-1 text-[10px] text-warn" title="The limit lies inside the prediction's uncertainty band: the model cannot tell pass from fail here." data-testid="uncertain-badge">
                      uncertain
                    </span>
                  ) : null}
                </td>
                <td className="py-2 pr-3">
                  <StatusPill status={x.status} />
                  {x.events > 0 ? <span className="ml-1 text-[11px] text-ink-500">· {x.events} in thread</span> : null}
                </td>
                <td className="py-2 pr-3 text-xs text-ink-700">{x.assignee?.name ?? '—'}</td>
              </tr>
            );
          })}
          {data.items.length === 0 ? (
            <tr>
              <td colSpan={7} className="py-3 text-sm text-ink-500">
                No findings match these filters.
              </td>
            </tr>
          ) : null}
        </tbody>
      </table>
    </div>
  );
}

const MEMBER_PAGE = 20;

/** A group's members, loaded when the group is opened, 50 at a time. */
function GroupMembers({ analysisId, group, colSpan, openKey, onPick }: { analysisId: string; group: GroupRow; colSpan: number; openKey: string | null; onPick: (f: FindingItem) => void }) {
  const [limit, setLimit] = useState(MEMBER_PAGE);
  const q = useQuery({
    queryKey: ['findings', analysisId, 'group', group.id, limit],
    queryFn: () => apiJson<{ total: number; items: FindingItem[] }>(`/api/v1/analyses/${analysisId}/findings?view=flat&group=${encodeURIComponent(group.id)}&limit=${limit}`),
    placeholderData: keepPreviousData,
  });
  return (
    <tr className="bg-wafer-50">
      <td colSpan={colSpan} className="px-6 py-2">
        {q.error ? <p className="text-xs text-fail">{q.error.message}</p> : null}
        <ul className="divide-y divide-wafer-200" data-testid="group-members">
          {q.data?.items.map((f) => (
            <li key={f.key}>
              <button
                type="button"
                onClick={() => onPick(f)}
                className={`grid w-full grid-cols-[16rem_9rem_9rem_auto_auto] items-baseline gap-x-3 px-1 py-1 text-left text-xs hover:bg-white ${openKey === f.key ? 'bg-copper-300/20' : ''}`}
              >
                <span className="truncate font-mono">{f.key}</span>
                <span className="font-mono text-ink-500">{f.atUm.map((v) => v.toFixed(1)).join(', ')} µm</span>
                <span className="font-mono">{measuredText(f)}</span>
                <StatusPill status={f.status} />
                <span className="text-ink-500">{f.assignee?.name ?? ''}</span>
              </button>
            </li>
          ))}
        </ul>
        {q.data && q.data.total > q.data.items.length ? (
          <button type="button" className="mt-1 text-xs text-oxide-600 hover:underline" onClick={() => setLimit((l) => Math.min(500, l + MEMBER_PAGE))}>
            {limit >= 500 ? `showing 500 of ${q.data.total}; filter to narrow` : `show more (${q.data.items.length} of ${q.data.total})`}
          </button>
        ) : null}
      </td>
    </tr>
  );
}
