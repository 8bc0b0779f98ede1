'use client';

import { useRouter } from 'next/navigation';
import { useState } from 'react';
import { Button } from '@/components/ui/button';
import { Field, FormAlert } from '@/components/ui/field';
import { ApiClientError, apiJson } from '@/components/pipeline/api-client';

type Source = { value: string; label: string };

/** New model in a team: a name, what it is for, and what to start from (a sample or an existing version). */
export function NewModelForm({ teamId, sources }: { teamId: string; sources: Source[] }) {
  const router = useRouter();
  const [name, setName] = useState('');
  const [from, setFrom] = useState(sources[0]?.value ?? '');
  const [featureKind, setFeatureKind] = useState<'trench' | 'hole'>('trench');
  const [errors, setErrors] = useState<Record<string, string[]>>({});
  const [message, setMessage] = useState<string | undefined>();
  const [busy, setBusy] = useState(false);
  const submit = async () => {
    setBusy(true);
    setMessage(undefined);
    const [type, id] = from.split(':');
    try {
      const r = await apiJson<{ version: { id: string } }>(`/api/v1/teams/${teamId}/models`, {
        method: 'POST',
        json: { name, featureKind, ...(type === 'version' ? { fromVersionId: id } : { fromSample: id }) },
      });
      router.push(`/models/versions/${r.version.id}`);
    } catch (e) {
      if (e instanceof ApiClientError) {
        setErrors(e.fieldErrors);
        setMessage(e.message);
      } else setMessage(String(e));
    } finally {
      setBusy(false);
    }
  };
  return (
    <form
      className="grid gap-3 sm:grid-cols-[1fr_1fr_10rem_auto] sm:items-end"
      data-testid="new-model-form"
      onSubmit={(e) => {
        e.preventDefault();
        void submit();
      }}
    >
      <Field label="Name" name="name" value={name} onChange={(e) => setName(e.target.value)} errors={errors.name} placeholder="e.g. Deep trench, tool B" />
      <div className="space-y-1.5">
        <label htmlFor="model-from" className="block text-sm font-medium text-ink-800">
          Start from
        </label>
        <select id="model-from" className="block w-full rounded-md border border-wafer-300 bg-white px-3 py-2 text-sm" value={from} onChange={(e) => setFrom(e.target.value)}>
          {sources.map((s) => (
            <option key={s.value} value={s.value}>
              {s.label}
            </option>
          ))}
        </select>
      </div>
      <div className="space-y-1.5">
        <label htmlFor="model-kind" className="block text-sm font-medium text-ink-800">
          Made for
        </label>
        <select id="model-kind" className="block w-full rounded-md border border-wafer-300 bg-white px-3 py-2 text-sm" value={featureKind} onChange={(e) => setFeatureKind(e.target.value as 'trench' | 'hole')}>
          <option value="trench">trenches</option>
          <option value="hole">holes / vias</option>
        </select>
      </div>
      <Button type="submit" disabled={busy}>
        {busy ? 'Creating…' : 'Create draft'}
      </Button>
      <div className="sm:col-span-4">
        <FormAlert message={message} />
      </div>
    </form>
  );
}
