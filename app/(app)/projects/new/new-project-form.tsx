'use client';

import { useActionState } from 'react';
import { Button } from '@/components/ui/button';
import { Field, FormAlert } from '@/components/ui/field';
import type { FormState } from '@/lib/http/form-state';
import { createProjectAction } from '../actions';

export function NewProjectForm({ teams }: { teams: { id: string; name: string }[] }) {
  const [state, action, pending] = useActionState<FormState, FormData>(createProjectAction, {});
  const v = state.values ?? {};
  const descErrors = state.fieldErrors?.description;
  return (
    <form action={action} className="space-y-4" noValidate>
      <FormAlert message={state.message} />
      {teams.length === 1 ? (
        <input type="hidden" name="teamId" value={teams[0]?.id} />
      ) : (
        <div className="space-y-1.5">
          <label htmlFor="field-teamId" className="block text-sm font-medium text-ink-800">
            Team
          </label>
          <select id="field-teamId" name="teamId" defaultValue={v.teamId ?? teams[0]?.id} className="block w-full rounded-md border border-wafer-300 bg-white px-3 py-2 text-sm">
            {teams.map((t) => (
              <option key={t.id} value={t.id}>
                {t.name}
              </option>
            ))}
          </select>
        </div>
      )}
      <Field label="Name" name="name" defaultValue={v.name ?? ''} errors={state.fieldErrors?.name} placeholder="e.g. Pressure sensor membrane, rev B" />
      <div className="space-y-1.5">
        <label htmlFor="field-description" className="block text-sm font-medium text-ink-800">
          Description <span className="font-normal text-ink-500">(optional)</span>
        </label>
        <textarea
          id="field-description"
          name="description"
          rows={3}
          defaultValue={v.description ?? ''}
          aria-invalid={descErrors ? true : undefined}
          className="block w-full rounded-md border border-wafer-300 bg-white px-3 py-2 text-sm focus:border-copper-500 focus:ring-2 focus:ring-copper-400/30 focus:outline-none"
        />
        {descErrors ? <p className="text-xs text-fail">{descErrors.join(' ')}</p> : null}
      </div>
      <Button type="submit" disabled={pending}>
        {pending ? 'Creating…' : 'Create project'}
      </Button>
    </form>
  );
}
