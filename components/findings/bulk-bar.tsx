'use client';

import { useState } from 'react';
import { Button } from '@/components/ui/button';
import { FINDING_STATUSES, STATUS_LABEL, type FindingStatus } from '@/lib/review/statuses';
import type { FindingsResponse } from './types';

export type ChangeRequest = { status?: FindingStatus; assigneeId?: string | null; reason?: string };

/**
 * Status and assignment for the checked rows (a group row stands for all its members). Waiving asks for the
 * written reason here; the server refuses a waiver without one anyway.
 */
export function BulkBar(props: { selectedCount: number; memberCount: number; data: FindingsResponse; pending: boolean; error: string | null; onApply: (c: ChangeRequest) => void; onClear: () => void }) {
  const [status, setStatus] = useState<FindingStatus | ''>('');
  const [assignee, setAssignee] = useState('');
  const [reason, setReason] = useState('');
  const allowed = (s: FindingStatus) => (s === 'waived' ? props.data.can.waive : s === 'verified' ? props.data.can.verify : props.data.can.triage);
  if (props.selectedCount === 0) return null;
  const apply = () =>
    props.onApply({
      ...(status ? { status } : {}),
      ...(assignee ? { assigneeId: assignee === 'none' ? null : assignee } : {}),
      ...(status === 'waived' ? { reason } : {}),
    });
  return (
    <div className="mb-3 rounded-md border border-copper-300 bg-copper-300/10 p-3" data-testid="bulk-bar">
      <div className="flex flex-wrap items-center gap-2 text-xs">
        <span className="font-medium text-ink-900">
          {props.selectedCount} row{props.selectedCount === 1 ? '' : 's'} checked · {props.memberCount} finding{props.memberCount === 1 ? '' : 's'}
        </span>
        <select aria-label="New status" value={status} onChange={(e) => setStatus(e.target.value as FindingStatus | '')} className="rounded-md border border-wafer-300 bg-white px-2 py-1.5" data-testid="bulk-status">
          <option value="">status unchanged</option>
          {FINDING_STATUSES.filter(allowed).map((s) => (
            <option key={s} value={s}>
              {STATUS_LABEL[s]}
            </option>
          ))}
        </select>
        {props.data.can.triage ? (
          <select aria-label="Assign to" value={assignee} onChange={(e) => setAssignee(e.target.value)} className="rounded-md border border-wafer-300 bg-white px-2 py-1.5" data-testid="bulk-assignee">
            <option value="">assignee unchanged</option>
            <option value="none">nobody</option>
            {props.data.members.map((m) => (
              <option key={m.id} value={m.id}>
                {m.name}
              </option>
            ))}
          </select>
        ) : null}
        <Button onClick={apply} disabled={props.pending || (!status && !assignee)} className="px-2.5 py-1 text-xs" data-testid="bulk-apply">
          {props.pending ? 'Applying…' : 'Apply'}
        </Button>
        <Button variant="ghost" onClick={props.onClear} className="px-2 py-1 text-xs">
          Clear
        </Button>
      </div>
      {status === 'waived' ? (
        <label className="mt-2 block text-xs text-ink-700">
          Waiver reason (required; recorded with your name as approver)
          <textarea value={reason} onChange={(e) => setReason(e.target.value)} rows={2} className="mt-1 block w-full rounded-md border border-wafer-300 bg-white p-2 text-sm" data-testid="bulk-reason" />
        </label>
      ) : null}
      {props.error ? (
        <p role="alert" className="mt-2 text-xs text-fail" data-testid="bulk-error">
          {props.error}
        </p>
      ) : null}
    </div>
  );
}
