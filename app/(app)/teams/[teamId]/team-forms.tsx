'use client';

import { useActionState } from 'react';
import { Button } from '@/components/ui/button';
import { Field, FormAlert } from '@/components/ui/field';
import { ROLE_LABEL, TEAM_ROLES, type TeamRole } from '@/lib/auth/permissions';
import type { FormState } from '@/lib/http/form-state';
import { changeRoleAction, inviteMemberAction, removeMemberAction, renameTeamAction } from './actions';

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

export function MemberControls({ teamId, userId, role }: { teamId: string; userId: string; role: TeamRole }) {
  const [roleState, roleAction, rolePending] = useActionState<FormState, FormData>(changeRoleAction, {});
  const [removeState, removeAction, removePending] = useActionState<FormState, FormData>(removeMemberAction, {});
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
        <form action={removeAction}>
          <input type="hidden" name="teamId" value={teamId} />
          <input type="hidden" name="userId" value={userId} />
          <Button type="submit" variant="danger" className="!px-2 !py-1 text-xs" disabled={removePending}>
            Remove
          </Button>
        </form>
      </div>
      {error ? <p className="text-xs text-fail">{error}</p> : null}
    </div>
  );
}
