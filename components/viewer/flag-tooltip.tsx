'use client';

import { useQuery } from '@tanstack/react-query';
import { apiJson } from '@/components/pipeline/api-client';
import type { FlagRecord } from '@/lib/viewer/flag-wire';
import type { FlagSource } from './use-flag-marks';

export type HoverMark = { record: FlagRecord & { severity: string }; source: FlagSource; merged: number; sx: number; sy: number };

/**
 * The explanation of the flag under the cursor. Stored flags carry no message in flags.bin; it is fetched from
 * the JSON flags API at the flag's rank position (flags.bin is in rank order) and checked against the key.
 */
export function FlagTooltip({ hover, base, whatIfMessage, width }: { hover: HoverMark; base: string; whatIfMessage: (i: number) => string | undefined; width: number }) {
  const storedIndex = 'stored' in hover.source ? hover.source.stored : null;
  const msg = useQuery({
    queryKey: ['flag-at', base, storedIndex],
    enabled: storedIndex !== null,
    staleTime: Infinity,
    queryFn: () => apiJson<{ items: { key: string; message: string }[] }>(`${base}/flags?offset=${storedIndex}&limit=1`),
  });
  const r = hover.record;
  const fetched = msg.data?.items[0];
  const message = 'whatIf' in hover.source ? whatIfMessage(hover.source.whatIf) : fetched && fetched.key === r.key ? fetched.message : msg.isLoading ? '…' : undefined;
  return (
    <div className="pointer-events-none absolute z-10 max-w-xs rounded border border-ink-900/20 bg-white p-2 text-xs shadow" style={{ left: Math.min(hover.sx + 14, width - 300), top: hover.sy + 14 }} data-testid="flag-tooltip">
      <p className="font-semibold text-ink-900">
        {r.severity} · {r.kind}
      </p>
      <p className="text-ink-700">{message ?? `measured ${r.measured.toPrecision(3)} ${r.unit}, limit ${r.limit.toPrecision(3)} ${r.unit}`}</p>
      {hover.merged > 1 ? <p className="mt-1 text-ink-500">{`+${hover.merged - 1} more flag${hover.merged > 2 ? 's' : ''} under this mark; zoom in to separate them.`}</p> : null}
    </div>
  );
}
