'use server';

import { revalidatePath } from 'next/cache';
import { apiTokenIdInput, apiTokenInput } from '@/lib/api/schemas';
import { createApiToken, findApiToken, listApiTokens, MAX_ACTIVE_TOKENS, revokeApiToken } from '@/lib/auth/api-tokens';
import { requireTeamMember } from '@/lib/auth/guard';
import { requireUser } from '@/lib/auth/session';
import { recordAudit } from '@/lib/data/audit';
import { ApiError } from '@/lib/http/errors';
import { errorToFormState, formValues, type FormState } from '@/lib/http/form-state';

/** Form state of the create form; `token` is the plain token, present only in the one response that created it. */
export type CreateTokenState = FormState & { token?: string; tokenName?: string; teamName?: string };

/** Creates a token for a team the signed-in user belongs to (any role: the token acts with that role). */
export async function createApiTokenAction(_prev: CreateTokenState, formData: FormData): Promise<CreateTokenState> {
  const values = formValues(formData);
  try {
    const user = await requireUser();
    const input = apiTokenInput.parse(values);
    const access = await requireTeamMember(input.teamId, user);
    if (listApiTokens(user.id).filter((t) => !t.revokedAt).length >= MAX_ACTIVE_TOKENS) {
      throw new ApiError('conflict', `You already have ${MAX_ACTIVE_TOKENS} active tokens; revoke one you no longer use first.`);
    }
    const { token, row } = createApiToken(user.id, access.teamId, input.name);
    recordAudit({ actorId: user.id, teamId: access.teamId, action: 'token.create', target: row.id, detail: { name: row.name, prefix: row.prefix } });
    revalidatePath('/account/tokens');
    return { ok: true, token, tokenName: row.name, values: { teamId: access.teamId } };
  } catch (error) {
    return errorToFormState(error, values);
  }
}

/** Revokes one of the signed-in user's own tokens. */
export async function revokeApiTokenAction(_prev: FormState, formData: FormData): Promise<FormState> {
  try {
    const user = await requireUser();
    const { tokenId } = apiTokenIdInput.parse(formValues(formData));
    const token = findApiToken(user.id, tokenId);
    if (!token || !revokeApiToken(user.id, tokenId)) throw new ApiError('not_found', 'That token does not exist or is already revoked.');
    recordAudit({ actorId: user.id, teamId: token.teamId, action: 'token.revoke', target: token.id, detail: { name: token.name, prefix: token.prefix } });
    revalidatePath('/account/tokens');
    return { ok: true, message: `Revoked "${token.name}". Scripts using it now get 401.` };
  } catch (error) {
    return errorToFormState(error);
  }
}
