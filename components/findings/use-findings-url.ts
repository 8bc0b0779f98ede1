'use client';

import { usePathname, useRouter, useSearchParams } from 'next/navigation';
import { useCallback, useMemo } from 'react';

/** The findings list's state in the URL, so a filtered view can be shared as a link. */
export const URL_KEYS = ['view', 'kind', 'severity', 'status', 'layer', 'assignee', 'q', 'sort', 'dir', 'page', 'finding'] as const;
export type FindingsUrlState = Partial<Record<(typeof URL_KEYS)[number], string>>;

export function useFindingsUrl(): [FindingsUrlState, (patch: FindingsUrlState) => void] {
  const params = useSearchParams();
  const router = useRouter();
  const pathname = usePathname();
  const state = useMemo(() => {
    const s: FindingsUrlState = {};
    for (const k of URL_KEYS) {
      const v = params.get(k);
      if (v) s[k] = v;
    }
    return s;
  }, [params]);
  const update = useCallback(
    (patch: FindingsUrlState) => {
      const next = new URLSearchParams(params.toString());
      for (const [k, v] of Object.entries(patch)) {
        if (v) next.set(k, v);
        else next.delete(k);
      }
      const qs = next.toString();
      router.replace(qs ? `${pathname}?${qs}` : pathname, { scroll: false });
    },
    [params, router, pathname],
  );
  return [state, update];
}

/** The API query string for the list from the URL state (page size fixed at 25 rows). */
export const PAGE_SIZE = 25;
export function apiQuery(s: FindingsUrlState, extra: Record<string, string> = {}): string {
  const q = new URLSearchParams();
  for (const k of ['view', 'kind', 'severity', 'status', 'layer', 'assignee', 'q', 'sort', 'dir'] as const) if (s[k]) q.set(k, s[k] as string);
  q.set('limit', String(PAGE_SIZE));
  q.set('offset', String(Math.max(0, (Number(s.page ?? '1') || 1) - 1) * PAGE_SIZE));
  for (const [k, v] of Object.entries(extra)) q.set(k, v);
  return q.toString();
}
