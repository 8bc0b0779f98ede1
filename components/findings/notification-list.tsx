'use client';

import Link from 'next/link';
import { useRouter } from 'next/navigation';
import { useState, useTransition } from 'react';
import { apiJson, formatWhen } from '@/components/pipeline/api-client';
import { Button } from '@/components/ui/button';
import { Card } from '@/components/ui/card';
import type { NotificationPrefs } from '@/lib/review/notifications';

type Item = { id: string; kind: string; at: string; actorName: string; title: string; body: string; read: boolean; context?: string | null; href: string | null };
const KIND_LABEL: Record<string, string> = { assignment: 'Assigned', mention: 'Mentioned', status: 'Status' };
const PREF_LABEL: Record<keyof NotificationPrefs, string> = {
  emailAssignment: 'when a finding is assigned to me',
  emailMention: 'when someone mentions me',
  emailStatus: 'when a finding I am involved in changes status',
};

/** The in-app notification list (unread first marked), mark-as-read, and the e-mail opt-outs. */
export function NotificationList({ initial, prefs }: { initial: { unread: number; items: Item[] }; prefs: NotificationPrefs }) {
  const router = useRouter();
  const [items, setItems] = useState(initial.items);
  const [p, setP] = useState(prefs);
  const [saved, setSaved] = useState<string | null>(null);
  const [, start] = useTransition();
  const markAll = async () => {
    await apiJson('/api/v1/notifications/read', { method: 'POST', json: { all: true } });
    setItems((xs) => xs.map((x) => ({ ...x, read: true })));
    start(() => router.refresh());
  };
  const markOne = (id: string) => void apiJson('/api/v1/notifications/read', { method: 'POST', json: { ids: [id] } });
  const savePrefs = async (next: NotificationPrefs) => {
    setP(next);
    setSaved(null);
    try {
      setP(await apiJson<NotificationPrefs>('/api/v1/notifications/prefs', { method: 'PUT', json: next }));
      setSaved('Saved.');
    } catch (e) {
      setSaved(e instanceof Error ? e.message : 'Not saved.');
    }
  };
  const unread = items.filter((x) => !x.read).length;
  return (
    <div className="grid gap-6 lg:grid-cols-[1fr_300px]">
      <Card>
        <div className="flex items-center justify-between border-b border-wafer-200 px-5 py-3">
          <h2 className="text-sm font-semibold">{unread ? `${unread} unread` : 'All read'}</h2>
          <Button variant="secondary" className="px-2.5 py-1 text-xs" onClick={markAll} disabled={unread === 0} data-testid="mark-all-read">
            Mark all read
          </Button>
        </div>
        {items.length === 0 ? <p className="px-5 py-6 text-sm text-ink-500">Nothing yet. You are notified when a finding is assigned to you, when someone mentions you, and when a finding you are involved in changes status.</p> : null}
        <ul className="divide-y divide-wafer-200" data-testid="notification-list">
          {items.map((n) => (
            <li key={n.id} className={`px-5 py-3 ${n.read ? '' : 'bg-copper-300/10'}`} data-read={n.read}>
              <p className="text-sm">
                <span className="mr-2 rounded bg-wafer-200 px-1.5 py-0.5 text-[11px] text-ink-700">{KIND_LABEL[n.kind] ?? n.kind}</span>
                {n.href ? (
                  <Link href={n.href} onClick={() => markOne(n.id)} className="font-medium text-ink-900 hover:underline">
                    {n.title}
                  </Link>
                ) : (
                  <span className="font-medium">{n.title}</span>
                )}
              </p>
              {/* One meta line, whatever the title's length: where (project · layout) and when. */}
              <p className="mt-0.5 text-xs text-ink-500">
                {n.context ? <span data-testid="notification-context">{n.context} · </span> : null}
                <span className="font-mono text-[11px]">{formatWhen(n.at)}</span>
              </p>
              {n.body ? <p className="mt-1 text-xs whitespace-pre-wrap text-ink-700">{n.body}</p> : null}
            </li>
          ))}
        </ul>
      </Card>
      <Card className="h-fit p-5">
        <h2 className="text-sm font-semibold">E-mail settings</h2>
        <p className="mt-1 text-xs text-ink-500">In-app notifications always appear here. Send me an e-mail…</p>
        <div className="mt-3 space-y-2">
          {(Object.keys(PREF_LABEL) as (keyof NotificationPrefs)[]).map((k) => (
            <label key={k} className="flex items-start gap-2 text-sm text-ink-800">
              <input type="checkbox" className="mt-1" checked={p[k]} onChange={(e) => void savePrefs({ ...p, [k]: e.target.checked })} data-testid={`pref-${k}`} />
              {PREF_LABEL[k]}
            </label>
          ))}
        </div>
        {saved ? <p className="mt-2 text-xs text-ink-500">{saved}</p> : null}
      </Card>
    </div>
  );
}
