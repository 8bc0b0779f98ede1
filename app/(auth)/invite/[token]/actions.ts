'use server';

import { headers } from 'next/headers';
import { redirect } from 'next/navigation';
import { z } from 'zod';
import { requireUser, startSession } from '@/lib/auth/session';
import { createAccount } from '@/lib/data/accounts';
import { acceptInvite, findInvite } from '@/lib/data/invites';
import { acceptInviteNewAccountInput } from '@/lib/data/schemas';
import { clientAddress } from '@/lib/http/client-address';
import { ApiError } from '@/lib/http/errors';
import { errorToFormState, formValues, type FormState } from '@/lib/http/form-state';

const tokenField = z.string().min(10).max(100);

/** Signed-in user accepts an invitation addressed to their e-mail. */
export async function acceptInviteAction(_prev: FormState, formData: FormData): Promise<FormState> {
  let teamId: string;
  try {
    const token = tokenField.parse(formData.get('token'));
    teamId = acceptInvite(token, await requireUser()).teamId;
  } catch (error) {
    return errorToFormState(error);
  }
  redirect(`/teams/${teamId}`);
}

/** Someone without an account accepts: the account is created for the invited address, then joined. */
export async function acceptWithNewAccountAction(_prev: FormState, formData: FormData): Promise<FormState> {
  const { password: _pw, ...values } = formValues(formData);
  let teamId: string;
  try {
    const token = tokenField.parse(formData.get('token'));
    const input = acceptInviteNewAccountInput.parse(formValues(formData));
    const invite = findInvite(token);
    if (!invite) throw new ApiError('not_found', 'This invitation is unknown, already used or expired.');
    const user = await createAccount(input.name, invite.email, input.password, clientAddress(await headers()));
    teamId = acceptInvite(token, user).teamId;
    await startSession(user.id);
  } catch (error) {
    return errorToFormState(error, values);
  }
  redirect(`/teams/${teamId}`);
}
