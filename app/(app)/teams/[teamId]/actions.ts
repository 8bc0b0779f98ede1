'use server';

import { revalidatePath } from 'next/cache';
import { z } from 'zod';
import { cancelInvite, createInvite } from '@/lib/data/invites';
import { idParam, inviteInput, roleChangeInput, teamUpdateInput } from '@/lib/data/schemas';
import { changeMemberRole, removeMember, renameTeam } from '@/lib/data/teams';
import { errorToFormState, formValues, type FormState } from '@/lib/http/form-state';

// Every action re-checks the caller's role through the DAL (requireTeamPermission); the page hiding a form is
// not protection.

export async function inviteMemberAction(_prev: FormState, formData: FormData): Promise<FormState> {
  const values = formValues(formData);
  try {
    const teamId = idParam.parse(values.teamId);
    const input = inviteInput.parse(values);
    await createInvite(teamId, input);
    revalidatePath(`/teams/${teamId}`);
    return { ok: true, message: `Invitation sent to ${input.email}.` };
  } catch (error) {
    return errorToFormState(error, values);
  }
}

export async function renameTeamAction(_prev: FormState, formData: FormData): Promise<FormState> {
  const values = formValues(formData);
  try {
    const teamId = idParam.parse(values.teamId);
    await renameTeam(teamId, teamUpdateInput.parse(values));
    revalidatePath('/', 'layout');
    return { ok: true, message: 'Team renamed.' };
  } catch (error) {
    return errorToFormState(error, values);
  }
}

const memberForm = z.object({ teamId: idParam, userId: idParam });
// Removal is only done from the confirmation form, which carries this field.
const removeForm = memberForm.extend({ confirm: z.literal('remove', 'Confirm the removal first.') });

export async function changeRoleAction(_prev: FormState, formData: FormData): Promise<FormState> {
  const values = formValues(formData);
  try {
    const { teamId, userId } = memberForm.parse(values);
    await changeMemberRole(teamId, userId, roleChangeInput.parse(values));
    revalidatePath(`/teams/${teamId}`);
    return { ok: true, message: 'Role changed.' };
  } catch (error) {
    return errorToFormState(error, values);
  }
}

export async function removeMemberAction(_prev: FormState, formData: FormData): Promise<FormState> {
  const values = formValues(formData);
  try {
    const { teamId, userId } = removeForm.parse(values);
    await removeMember(teamId, userId);
    revalidatePath(`/teams/${teamId}`);
    return { ok: true, message: 'Member removed; their API tokens for this team are revoked.' };
  } catch (error) {
    return errorToFormState(error, values);
  }
}

const inviteForm = z.object({ teamId: idParam, inviteId: idParam });

export async function cancelInviteAction(_prev: FormState, formData: FormData): Promise<FormState> {
  const values = formValues(formData);
  try {
    const { teamId, inviteId } = inviteForm.parse(values);
    await cancelInvite(teamId, inviteId);
    revalidatePath(`/teams/${teamId}`);
    return { ok: true, message: 'Invitation cancelled.' };
  } catch (error) {
    return errorToFormState(error, values);
  }
}
