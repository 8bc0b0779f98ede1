import { STATUS_LABEL, type FindingStatus } from '@/lib/review/statuses';

const TONE: Record<FindingStatus | 'mixed', string> = {
  open: 'bg-wafer-200 text-ink-800',
  needs_change: 'bg-fail/10 text-fail',
  waived: 'bg-oxide-500/10 text-oxide-600',
  fixed_later: 'bg-warn/10 text-warn',
  verified: 'bg-pass/10 text-pass',
  mixed: 'bg-white text-ink-700 ring-1 ring-wafer-300',
};

/** A finding's review status as a small label. */
export function StatusPill({ status }: { status: FindingStatus | 'mixed' }) {
  return (
    <span className={`inline-block rounded px-1.5 py-0.5 text-[11px] font-medium whitespace-nowrap ${TONE[status]}`} data-status={status}>
      {status === 'mixed' ? 'Mixed' : STATUS_LABEL[status]}
    </span>
  );
}

export const SEVERITY_TONE: Record<string, string> = { error: 'text-fail', warning: 'text-warn', info: 'text-ink-500' };
