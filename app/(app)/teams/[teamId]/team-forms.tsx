'use client';

import { useActionState, useState } from 'react';
import { Button } from '@/components/ui/button';
import { Field, FormAlert } from '@/components/ui/field';
import { ROLE_LABEL, TEAM_ROLES, type TeamRole } from '@/lib/auth/permissions';
import type { FormState } from '@/lib/http/form-state';
import { cancelInviteAction, changeRoleAction, inviteMemberAction, removeMemberAction, renameTeamAction } from './actions';

const selectClass = 'block w-full rounded-md border border-wafer-300 bg-white px-3 py-2 text-sm';

export function InviteForm({ teamId }: { teamId: string }) {
  const [state, action, pending] = useActionState<FormState, FormData>(inviteMemberAction, {});
  return (
    <form action={action} className="space-y-3" noValidate data-testid="invite-form">
      <input type="hidden" name="teamId" value={teamId} />
      <FormAlert message={state.message} tone={state.ok ? 'success' : 'error'} />
      <Field label="E-mail" name="email" type="email" defaultValue={state.ok ? '' : (state.values?.email ?? '')} errors={state.fieldErrors?.email} />
      <div className="space-y-1.5">
        <label htmlFor="invite-role" className="block text-sm font-medium text-ink-800">
          Role
        </label>
        <select id="invite-role" name="role" defaultValue={state.values?.role ?? 'designer'} className={selectClass}>
          {TEAM_ROLES.map((r) => (
            <option key={r} value={r}>
              {ROLE_LABEL[r]}
            </option>
          ))}
        </select>
        {state.fieldErrors?.role ? <p className="text-xs text-fail">{state.fieldErrors.role.join(' ')}</p> : null}
      </div>
      <Button type="submit" disabled={pending}>
        {pending ? 'Sending…' : 'Send invitation'}
      </Button>
    </form>
  );
}

export function RenameTeamForm({ teamId, name }: { teamId: string; name: string }) {
  const [state, action, pending] = useActionState<FormState, FormData>(renameTeamAction, {});
  return (
    <form action={action} className="space-y-3" noValidate>
      <input type="hidden" name="teamId" value={teamId} />
      <FormAlert message={state.message} tone={state.ok ? 'success' : 'error'} />
      <Field label="Team name" name="name" defaultValue={state.values?.name ?? name} errors={state.fieldErrors?.name} />
      <Button type="submit" variant="secondary" disabled={pending}>
        Rename
      </Button>
    </form>
  );
}

export function MemberControls({ teamId, userId, role, name }: { teamId: string; userId: string; role: TeamRole; name: string }) {
  const [roleState, roleAction, rolePending] = useActionState<FormState, FormData>(changeRoleAction, {});
  const [removeState, removeAction, removePending] = useActionState<FormState, FormData>(removeMemberAction, {});
  // Removal takes two clicks: the first only asks, naming the person and what removal does.
  const [confirming, setConfirming] = useState(false);
  const error = (!roleState.ok && roleState.message) || (!removeState.ok && removeState.message) || undefined;
  return (
    <div className="flex flex-col items-end gap-1">
      <div className="flex items-center gap-2">
        <form action={roleAction} className="flex items-center gap-2">
          <input type="hidden" name="teamId" value={teamId} />
          <input type="hidden" name="userId" value={userId} />
          <select name="role" defaultValue={role} aria-label="Role" className="rounded border border-wafer-300 bg-white px-2 py-1 text-xs">
            {TEAM_ROLES.map((r) => (
              <option key={r} value={r}>
                {ROLE_LABEL[r]}
              </option>
            ))}
          </select>
          <Button type="submit" variant="secondary" className="!px-2 !py-1 text-xs" disabled={rolePending}>
            Set
          </Button>
        </form>
        {confirming ? null : (
          <Button type="button" variant="danger" className="!px-2 !py-1 text-xs" onClick={() => setConfirming(true)}>
            Remove…
          </Button>
        )}
      </div>
      {confirming ? (
        <form
          action={removeAction}
          role="alertdialog"
          aria-label={`Remove ${name}?`}
          data-testid="confirm-remove"
          className="mt-1 max-w-xs rounded-md border border-fail/40 bg-fail/5 p-2 text-right text-xs"
        >
          <input type="hidden" name="teamId" value={teamId} />
          <input type="hidden" name="userId" value={userId} />
          <input type="hidden" name="confirm" value="remove" />
          <p className="mb-2 text-left text-ink-800">
            Remove <span className="font-medium">{name}</span> from the team? Their API tokens for this team are revoked
            and are not restored if you invite them again.
          </p>
          <div className="flex justify-end gap-2">
            <Button type="button" variant="secondary" className="!px-2 !py-1 text-xs" onClick={() => setConfirming(false)}>
              Keep
            </Button>
            <Button type="submit" variant="danger" className="!px-2 !py-1 text-xs" disabled={removePending}>
              {removePending ? 'Removing…' : `Remove ${name}`}
            </Button>
          </div>
        </form>
      ) : null}
      {error ? <p className="text-xs text-fail">{error}</p> : null}
    </div>
  );
}

export function CancelInviteButton({ teamId, inviteId, email }: { teamId: string; inviteId: string; email: string }) {
  const [state, action, pending] = useActionState<FormState, FormData>(cancelInviteAction, {});
  return (
    <form action={action} className="flex items-center gap-2">
      <input type="hidden" name="teamId" value={teamId} />
      <input type="hidden" name="inviteId" value={inviteId} />
      {state.message && !state.ok ? <span className="text-xs text-fail">{state.message}</span> : null}
      <Button type="submit" variant="ghost" className="!px-2 !py-1 text-xs" disabled={pending} aria-label={`Cancel the invitation of ${email}`}>
        {pending ? 'Cancelling…' : 'Cancel invitation'}
      </Button>
    </form>
  );
}
