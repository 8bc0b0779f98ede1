'use client';

import { useEffect, useState } from 'react';
import { FINDING_STATUSES, STATUS_LABEL } from '@/lib/review/statuses';
import type { Member } from './types';
import type { FindingsUrlState } from './use-findings-url';

const select = 'rounded-md border border-wafer-300 bg-white px-2 py-1.5 text-xs text-ink-800';

/** Filters, search, sort and the grouped/flat switch; every change goes to the URL and back to page 1. */
export function FindingsToolbar(props: { state: FindingsUrlState; update: (p: FindingsUrlState) => void; kinds: string[]; layers: string[]; members: Member[] }) {
  const { state, update } = props;
  const set = (patch: FindingsUrlState) => update({ ...patch, page: '' });
  const [text, setText] = useState(state.q ?? '');
  useEffect(() => setText(state.q ?? ''), [state.q]);
  useEffect(() => {
    const t = setTimeout(() => {
      if ((state.q ?? '') !== text) set({ q: text });
    }, 350);
    return () => clearTimeout(t);
  }, [text]);
  const grouped = (state.view ?? 'groups') === 'groups';
  return (
    <div className="flex flex-wrap items-center gap-2" data-testid="findings-toolbar">
      <div className="flex rounded-md ring-1 ring-wafer-300" role="group" aria-label="Rows">
        {(['groups', 'flat'] as const).map((v) => (
          <button
            key={v}
            type="button"
            onClick={() => set({ view: v === 'groups' ? '' : 'flat' })}
            aria-pressed={grouped === (v === 'groups')}
            className={`px-2.5 py-1.5 text-xs first:rounded-l-md last:rounded-r-md ${grouped === (v === 'groups') ? 'bg-ink-900 text-wafer-50' : 'bg-white text-ink-700 hover:bg-wafer-100'}`}
          >
            {v === 'groups' ? 'Grouped' : 'Every finding'}
          </button>
        ))}
      </div>
      <select aria-label="Kind" className={`${select} max-w-52`} value={state.kind ?? ''} onChange={(e) => set({ kind: e.target.value })}>
        <option value="">all kinds</option>
        {props.kinds.map((k) => (
          <option key={k}>{k}</option>
        ))}
      </select>
      <select aria-label="Severity" className={select} value={state.severity ?? ''} onChange={(e) => set({ severity: e.target.value })}>
        <option value="">all severities</option>
        <option value="error">error</option>
        <option value="warning">warning</option>
        <option value="info">info</option>
      </select>
      <select aria-label="Status" className={select} value={state.status ?? ''} onChange={(e) => set({ status: e.target.value })} data-testid="filter-status">
        <option value="">all statuses</option>
        {FINDING_STATUSES.map((s) => (
          <option key={s} value={s}>
            {STATUS_LABEL[s]}
          </option>
        ))}
      </select>
      {props.layers.length > 1 ? (
        <select aria-label="Layer" className={select} value={state.layer ?? ''} onChange={(e) => set({ layer: e.target.value })}>
          <option value="">all layers</option>
          {props.layers.map((l) => (
            <option key={l}>{l}</option>
          ))}
        </select>
      ) : null}
      <select aria-label="Assignee" className={select} value={state.assignee ?? ''} onChange={(e) => set({ assignee: e.target.value })}>
        <option value="">anyone</option>
        <option value="none">unassigned</option>
        {props.members.map((m) => (
          <option key={m.id} value={m.id}>
            {m.name}
          </option>
        ))}
      </select>
      <input
        type="search"
        aria-label="Search findings"
        placeholder="Search text…"
        value={text}
        onChange={(e) => setText(e.target.value)}
        className="w-44 rounded-md border border-wafer-300 bg-white px-2 py-1.5 text-xs"
      />
      <select
        aria-label="Sort"
        className={select}
        value={`${state.sort ?? 'rank'}:${state.dir ?? 'asc'}`}
        onChange={(e) => {
          const [sort, dir] = e.target.value.split(':');
          set({ sort: sort === 'rank' ? '' : sort, dir: dir === 'asc' ? '' : dir });
        }}
      >
        <option value="rank:asc">worst first</option>
        {grouped ? <option value="count:desc">largest group first</option> : null}
        <option value="kind:asc">kind A–Z</option>
        <option value="status:asc">status</option>
        <option value="measured:asc">measured, low first</option>
        <option value="measured:desc">measured, high first</option>
        <option value="assignee:asc">assignee</option>
      </select>
    </div>
  );
}
