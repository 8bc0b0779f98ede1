'use server';

import { headers } from 'next/headers';
import { redirect } from 'next/navigation';
import { endSession, startSession } from '@/lib/auth/session';
import { authenticate, signUp } from '@/lib/data/accounts';
import { signInInput, signUpInput } from '@/lib/data/schemas';
import { clientAddress } from '@/lib/http/client-address';
import { safeNextPath } from '@/lib/http/safe-next';
import { errorToFormState, formValues, type FormState } from '@/lib/http/form-state';

export async function signInAction(_prev: FormState, formData: FormData): Promise<FormState> {
  const { password: _pw, ...values } = formValues(formData);
  try {
    const input = signInInput.parse(formValues(formData));
    const user = await authenticate(input, clientAddress(await headers()));
    await startSession(user.id);
  } catch (error) {
    return errorToFormState(error, values);
  }
  redirect(safeNextPath(formData.get('next')));
}

export async function signUpAction(_prev: FormState, formData: FormData): Promise<FormState> {
  const { password: _pw, ...values } = formValues(formData);
  try {
    const input = signUpInput.parse(formValues(formData));
    const user = await signUp(input, clientAddress(await headers()));
    await startSession(user.id);
  } catch (error) {
    return errorToFormState(error, values);
  }
  redirect(safeNextPath(formData.get('next')));
}

export async function signOutAction(): Promise<void> {
  await endSession();
  redirect('/sign-in');
}
