const TONE: Record<string, string> = {
  queued: 'bg-wafer-200 text-ink-700 ring-1 ring-wafer-300',
  running: 'bg-oxide-500/12 text-oxide-600 ring-1 ring-oxide-500/30',
  done: 'bg-pass/10 text-pass ring-1 ring-pass/30',
  failed: 'bg-fail/10 text-fail ring-1 ring-fail/30',
  cancelled: 'bg-ink-100 text-ink-500 ring-1 ring-ink-300',
};

/** Job state of an analysis. */
export function StatusBadge({ status }: { status: string }) {
  return (
    <span data-testid="analysis-status" className={`inline-flex items-center rounded px-1.5 py-0.5 font-mono text-[11px] font-medium ${TONE[status] ?? TONE.queued}`}>
      {status}
    </span>
  );
}

/** Horizontal progress bar, 0..1. */
export function ProgressBar({ value, label }: { value: number; label?: string }) {
  const pct = Math.round(Math.min(1, Math.max(0, value)) * 100);
  return (
    <div role="progressbar" aria-valuemin={0} aria-valuemax={100} aria-valuenow={pct} aria-label={label ?? 'progress'} className="h-2 w-full overflow-hidden rounded-full bg-wafer-200">
      <div className="h-full rounded-full bg-copper-500 transition-[width] duration-300" style={{ width: `${pct}%` }} />
    </div>
  );
}
