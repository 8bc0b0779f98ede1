'use client';

import { useActionState, useState } from 'react';
import { Button } from '@/components/ui/button';
import { Field, FormAlert } from '@/components/ui/field';
import type { FormState } from '@/lib/http/form-state';
import { createApiTokenAction, revokeApiTokenAction, type CreateTokenState } from './actions';

const selectClass = 'block w-full rounded-md border border-wafer-300 bg-white px-3 py-2 text-sm';

/** Create form; after success it shows the new token once, with a copy button, above the reset form. */
export function CreateTokenForm({ teams }: { teams: { id: string; name: string; roleLabel: string }[] }) {
  const [state, action, pending] = useActionState<CreateTokenState, FormData>(createApiTokenAction, {});
  const v = state.values ?? {};
  return (
    <div className="space-y-4">
      {state.ok && state.token ? <NewTokenPanel token={state.token} name={state.tokenName ?? ''} /> : null}
      {/* key: a fresh, empty form after each created token */}
      <form key={state.token ?? 'form'} action={action} className="grid gap-4 sm:grid-cols-[1fr_1fr_auto] sm:items-start" noValidate data-testid="token-form">
        <div className="sm:col-span-3">
          <FormAlert message={state.ok ? undefined : state.message} />
        </div>
        <div className="space-y-1.5">
          <label htmlFor="token-team" className="block text-sm font-medium text-ink-800">
            Team
          </label>
          <select id="token-team" name="teamId" defaultValue={v.teamId ?? teams[0]?.id} className={selectClass}>
            {teams.map((t) => (
              <option key={t.id} value={t.id}>
                {t.name} — as {t.roleLabel.toLowerCase()}
              </option>
            ))}
          </select>
          {state.fieldErrors?.teamId ? <p className="text-xs text-fail">{state.fieldErrors.teamId.join(' ')}</p> : null}
        </div>
        <Field label="Name" name="name" defaultValue={state.ok ? '' : (v.name ?? '')} errors={state.fieldErrors?.name} placeholder="e.g. CI on main" maxLength={60} />
        <Button type="submit" disabled={pending} className="sm:mt-[1.6rem]">
          {pending ? 'Creating…' : 'Create token'}
        </Button>
      </form>
    </div>
  );
}

function NewTokenPanel({ token, name }: { token: string; name: string }) {
  const [copied, setCopied] = useState<'idle' | 'done' | 'failed'>('idle');
  const copy = async () => {
    try {
      await navigator.clipboard.writeText(token);
      setCopied('done');
    } catch {
      // Clipboard needs a secure context; the token stays selectable by hand.
      setCopied('failed');
    }
  };
  return (
    <div className="rounded-md border border-warn/40 bg-warn/8 p-4" role="status" data-testid="new-token">
      <p className="text-sm font-semibold text-ink-900">Token “{name}” created</p>
      <p className="mt-1 text-sm text-ink-700">
        <span className="font-semibold text-warn">Copy it now — it will not be shown again.</span> Trenchant keeps only a hash of it. Store it in
        your CI secret store, not in the repository.
      </p>
      <div className="mt-3 flex flex-wrap items-center gap-2">
        <code className="min-w-0 flex-1 rounded border border-wafer-300 bg-white px-3 py-2 font-mono text-sm break-all text-ink-900 select-all" data-testid="new-token-value">
          {token}
        </code>
        <Button type="button" variant="secondary" onClick={copy}>
          {copied === 'done' ? 'Copied' : 'Copy'}
        </Button>
      </div>
      {copied === 'failed' ? <p className="mt-2 text-xs text-fail">The browser did not allow copying; select the token and copy it by hand.</p> : null}
    </div>
  );
}

/** Revoke button of one token row. */
export function RevokeTokenButton({ tokenId, name }: { tokenId: string; name: string }) {
  const [state, action, pending] = useActionState<FormState, FormData>(revokeApiTokenAction, {});
  return (
    <form
      action={action}
      onSubmit={(e) => {
        if (!window.confirm(`Revoke "${name}"? Scripts using it stop working at once.`)) e.preventDefault();
      }}
      className="flex flex-col items-end gap-1"
    >
      <input type="hidden" name="tokenId" value={tokenId} />
      <Button type="submit" variant="danger" className="!px-2 !py-1 text-xs" disabled={pending} aria-label={`Revoke ${name}`}>
        {pending ? 'Revoking…' : 'Revoke'}
      </Button>
      {state.message && !state.ok ? <p className="text-xs text-fail">{state.message}</p> : null}
    </form>
  );
}
