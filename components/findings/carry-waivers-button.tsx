'use client';

import { useRouter } from 'next/navigation';
import { useState } from 'react';
import { apiJson } from '@/components/pipeline/api-client';
import { Button } from '@/components/ui/button';

export function CarryWaiversButton({ analysisId, from, toleranceUm }: { analysisId: string; from: string; toleranceUm: number }) {
  const router = useRouter();
  const [msg, setMsg] = useState<string | null>(null);
  const [busy, setBusy] = useState(false);
  return (
    <div className="flex items-center gap-2">
      <Button
        disabled={busy}
        data-testid="carry-waivers"
        onClick={async () => {
          setBusy(true);
          try {
            const r = await apiJson<{ carried: number }>(`/api/v1/analyses/${analysisId}/compare/carry-waivers`, { method: 'POST', json: { from, toleranceUm } });
            setMsg(`${r.carried} waiver${r.carried === 1 ? '' : 's'} carried over.`);
            router.refresh();
          } catch (e) {
            setMsg(e instanceof Error ? e.message : 'Failed.');
          } finally {
            setBusy(false);
          }
        }}
      >
        Carry waivers over
      </Button>
      {msg ? <span className="text-xs text-ink-700">{msg}</span> : null}
    </div>
  );
}
