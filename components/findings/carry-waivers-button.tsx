'use client';

import { useRouter } from 'next/navigation';
import { useEffect, useState } from 'react';
import { apiJson } from '@/components/pipeline/api-client';
import { Button } from '@/components/ui/button';

export function CarryWaiversButton({ analysisId, from, toleranceUm }: { analysisId: string; from: string; toleranceUm: number }) {
  const router = useRouter();
  const [msg, setMsg] = useState<string | null>(null);
  const [busy, setBusy] = useState(false);
  // The button is server-rendered: a click before hydration would be lost, so it stays disabled until then.
  const [hydrated, setHydrated] = useState(false);
  useEffect(() => setHydrated(true), []);
  return (
    <div className="flex items-center gap-2">
      <Button
        disabled={busy || !hydrated}
        data-testid="carry-waivers"
        onClick={async () => {
          setBusy(true);
          try {
            const r = await apiJson<{ carried: number }>(`/api/v1/analyses/${analysisId}/compare/carry-waivers`, { method: 'POST', json: { from, toleranceUm } });
            // The offer disappears once nothing is left to carry, so the outcome is shown by the page (?carried=N).
            const url = new URL(window.location.href);
            url.searchParams.set('carried', String(r.carried));
            router.replace(`${url.pathname}${url.search}`);
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
