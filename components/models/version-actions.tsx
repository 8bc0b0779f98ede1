'use client';

import { useRouter } from 'next/navigation';
import { useState } from 'react';
import { Button } from '@/components/ui/button';
import { FormAlert } from '@/components/ui/field';
import { ApiClientError, apiJson } from '@/components/pipeline/api-client';

/** Publish or discard a draft (each after a confirmation), or start a new draft from any version. */
export function VersionActions({ versionId, status, label }: { versionId: string; status: 'draft' | 'published'; label: string }) {
  const router = useRouter();
  const [busy, setBusy] = useState(false);
  const [error, setError] = useState<string | undefined>();
  const call = async (fn: () => Promise<void>) => {
    setBusy(true);
    setError(undefined);
    try {
      await fn();
    } catch (e) {
      setError(e instanceof ApiClientError ? e.message : String(e));
    } finally {
      setBusy(false);
    }
  };
  const publish = () =>
    call(async () => {
      if (!window.confirm(`Publish ${label}? A published version can no longer be edited; analyses may then use it.`)) return;
      await apiJson(`/api/v1/model-versions/${versionId}/publish`, { method: 'POST' });
      router.refresh();
    });
  const discard = () =>
    call(async () => {
      if (!window.confirm(`Discard ${label}? Its parameters and calibration are deleted.`)) return;
      await apiJson(`/api/v1/model-versions/${versionId}`, { method: 'DELETE' });
      router.push('/models');
    });
  const draft = () =>
    call(async () => {
      const r = await apiJson<{ version: { id: string } }>(`/api/v1/model-versions/${versionId}/drafts`, { method: 'POST' });
      router.push(`/models/versions/${r.version.id}`);
    });
  return (
    <div className="flex flex-col items-end gap-2">
      <div className="flex flex-wrap gap-2">
        {status === 'draft' ? (
          <>
            <Button type="button" variant="danger" onClick={discard} disabled={busy} data-testid="discard-draft">
              Discard draft
            </Button>
            <Button type="button" onClick={publish} disabled={busy} data-testid="publish-version">
              Publish
            </Button>
          </>
        ) : (
          <Button type="button" variant="secondary" onClick={draft} disabled={busy} data-testid="new-draft">
            New draft from {label}
          </Button>
        )}
      </div>
      <FormAlert message={error} />
    </div>
  );
}
