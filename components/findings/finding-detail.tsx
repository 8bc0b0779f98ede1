'use client';

import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { useState } from 'react';
import { apiJson } from '@/components/pipeline/api-client';
import { formatWhen } from '@/components/pipeline/api-client';
import { Button } from '@/components/ui/button';
import { FINDING_STATUSES, STATUS_LABEL, type FindingStatus } from '@/lib/review/statuses';
import { CommentBody } from './comment-body';
import { measuredText } from './findings-table';
import { StatusPill } from './status-pill';
import type { FindingItem, FindingsResponse } from './types';

type ThreadEvent = { id: string; type: 'comment' | 'status' | 'assign' | 'carry'; at: string; actorName: string; fromStatus: FindingStatus | null; toStatus: FindingStatus | null; assigneeName: string | null; body: string };

/** One finding: what it is, its waiver, its thread, and the forms to comment, change status and assign. */
export function FindingDetail({ analysisId, findingKey, data, onClose }: { analysisId: string; findingKey: string; data: FindingsResponse; onClose: () => void }) {
  const qc = useQueryClient();
  const item = useQuery({
    queryKey: ['findings', analysisId, 'one', findingKey],
    queryFn: () => apiJson<{ items: FindingItem[] }>(`/api/v1/analyses/${analysisId}/findings?view=flat&limit=1&key=${encodeURIComponent(findingKey)}`),
  });
  const f = item.data?.items[0];
  const thread = useQuery({
    queryKey: ['findings', analysisId, 'thread', f?.id],
    queryFn: () => apiJson<{ events: ThreadEvent[] }>(`/api/v1/analyses/${analysisId}/findings/${f?.id}`),
    enabled: Boolean(f),
  });
  const refresh = () => void qc.invalidateQueries({ queryKey: ['findings', analysisId] });
  const [comment, setComment] = useState('');
  const [status, setStatus] = useState<FindingStatus | ''>('');
  const [reason, setReason] = useState('');
  const post = useMutation({
    mutationFn: () => apiJson(`/api/v1/analyses/${analysisId}/findings/${f?.id}/comments`, { method: 'POST', json: { body: comment } }),
    onSuccess: () => {
      setComment('');
      refresh();
    },
  });
  const change = useMutation({
    mutationFn: (body: { status?: FindingStatus; reason?: string; assigneeId?: string | null }) => apiJson(`/api/v1/analyses/${analysisId}/findings/bulk`, { method: 'POST', json: { keys: [findingKey], ...body } }),
    onSuccess: () => {
      setStatus('');
      setReason('');
      refresh();
    },
  });
  const frozen = data.signoff.signoff !== null;
  const allowed = (s: FindingStatus) => (s === 'waived' ? data.can.waive : s === 'verified' ? data.can.verify : data.can.triage);
  const members = data.members.map((m) => ({ id: m.id, name: m.name, email: `${m.handle}@` }));

  return (
    <aside className="order-first rounded-lg border border-wafer-300 bg-wafer-50 p-4 xl:sticky xl:top-4 xl:order-none xl:max-h-[calc(100vh-2rem)] xl:self-start xl:overflow-y-auto" data-testid="finding-detail" aria-label="Finding">
      <div className="flex items-start justify-between gap-3">
        <div>
          <p className="font-mono text-xs text-ink-500">{findingKey}</p>
          {f ? (
            <p className="mt-1 text-sm text-ink-800">
              <StatusPill status={f.status} /> <span className="font-mono text-xs">{measuredText(f)}</span>
              {f.widthUm !== null ? <span className="font-mono text-xs text-ink-500"> · opening {String(Number(f.widthUm.toPrecision(4)))} µm wide</span> : null}
            </p>
          ) : null}
        </div>
        <button type="button" onClick={onClose} className="text-xs text-ink-500 hover:text-ink-900" aria-label="Close finding">
          ✕
        </button>
      </div>
      {item.error ? <p className="text-xs text-fail">{item.error.message}</p> : null}
      {item.data && !f ? (
        <p className="mt-2 text-xs text-ink-700" data-testid="finding-not-listed">
          This finding is not in the stored list (the list may be capped, or the link is from another analysis).
        </p>
      ) : null}
      {f ? <p className="mt-2 text-xs leading-relaxed text-ink-700">{f.message}</p> : null}
      {f?.waiver ? (
        <div className="mt-3 rounded-md border border-oxide-500/30 bg-white p-2 text-xs" data-testid="waiver">
          <p className="font-medium text-oxide-600">
            Waived by {f.waiver.approverName} on {f.waiver.at.slice(0, 10)}
          </p>
          <p className="mt-1 whitespace-pre-wrap text-ink-800">{f.waiver.reason}</p>
          {f.waiver.carriedNote ? <p className="mt-1 text-ink-500 italic" data-testid="carried-note">{f.waiver.carriedNote}</p> : null}
        </div>
      ) : null}

      {f && !frozen && (data.can.triage || data.can.waive || data.can.verify) ? (
        <div className="mt-4 space-y-2 border-t border-wafer-200 pt-3 text-xs">
          <div className="flex flex-wrap items-center gap-2">
            <select aria-label="Set status" value={status} onChange={(e) => setStatus(e.target.value as FindingStatus | '')} className="rounded-md border border-wafer-300 bg-white px-2 py-1.5" data-testid="detail-status">
              <option value="">change status…</option>
              {FINDING_STATUSES.filter((s) => allowed(s) && s !== f.status).map((s) => (
                <option key={s} value={s}>
                  {STATUS_LABEL[s]}
                </option>
              ))}
            </select>
            <Button className="px-2.5 py-1 text-xs" disabled={!status || change.isPending} onClick={() => status && change.mutate({ status, ...(status === 'waived' ? { reason } : {}) })} data-testid="detail-status-apply">
              Set
            </Button>
            {data.can.triage ? (
              <select
                aria-label="Assign"
                value={f.assignee?.id ?? ''}
                onChange={(e) => change.mutate({ assigneeId: e.target.value || null })}
                className="ml-auto rounded-md border border-wafer-300 bg-white px-2 py-1.5"
                data-testid="detail-assignee"
              >
                <option value="">unassigned</option>
                {data.members.map((m) => (
                  <option key={m.id} value={m.id}>
                    {m.name}
                  </option>
                ))}
              </select>
            ) : null}
          </div>
          {status === 'waived' ? (
            <label className="block text-ink-700">
              Waiver reason (required; your name is recorded as approver)
              <textarea value={reason} onChange={(e) => setReason(e.target.value)} rows={3} className="mt-1 block w-full rounded-md border border-wafer-300 bg-white p-2 text-sm" data-testid="detail-reason" />
            </label>
          ) : null}
          {change.error ? (
            <p role="alert" className="text-fail" data-testid="detail-error">
              {change.error.message}
            </p>
          ) : null}
        </div>
      ) : null}
      {frozen ? <p className="mt-3 text-xs text-ink-500">Signed off: this review is closed. Changes need a new analysis.</p> : null}

      <h3 className="mt-4 text-xs font-semibold tracking-wide text-ink-500 uppercase">Thread</h3>
      <ol className="mt-2 space-y-2" data-testid="thread">
        {thread.data?.events.map((e) => (
          <li key={e.id} className="rounded-md bg-white p-2 ring-1 ring-wafer-200">
            <p className="text-[11px] text-ink-500">
              <span className="font-medium text-ink-800">{e.actorName}</span> · {formatWhen(e.at)}
              {e.type === 'status' || e.type === 'carry' ? (
                <>
                  {' '}
                  · {e.fromStatus ? STATUS_LABEL[e.fromStatus] : ''} → <span className="font-medium">{e.toStatus ? STATUS_LABEL[e.toStatus] : ''}</span>
                </>
              ) : null}
              {e.type === 'assign' ? <> · assigned to {e.assigneeName}</> : null}
            </p>
            {e.body ? <CommentBody body={e.body} members={members} /> : null}
          </li>
        ))}
        {thread.data && thread.data.events.length === 0 ? <li className="text-xs text-ink-500">No comments or changes yet.</li> : null}
      </ol>
      {f && data.can.comment && !frozen ? (
        <form
          className="mt-3"
          onSubmit={(e) => {
            e.preventDefault();
            post.mutate();
          }}
        >
          <label htmlFor="finding-comment" className="text-xs text-ink-700">
            Comment (plain text; @ and a member&apos;s e-mail name or first name, e.g. @{data.members[0]?.handle ?? 'name'}, notifies them)
          </label>
          <textarea id="finding-comment" value={comment} onChange={(e) => setComment(e.target.value)} rows={3} maxLength={4000} className="mt-1 block w-full rounded-md border border-wafer-300 bg-white p-2 text-sm" data-testid="comment-input" />
          <div className="mt-2 flex items-center gap-2">
            <Button type="submit" disabled={!comment.trim() || post.isPending} className="px-2.5 py-1 text-xs" data-testid="comment-submit">
              {post.isPending ? 'Posting…' : 'Post comment'}
            </Button>
            {post.error ? <span className="text-xs text-fail">{post.error.message}</span> : null}
          </div>
        </form>
      ) : null}
    </aside>
  );
}
