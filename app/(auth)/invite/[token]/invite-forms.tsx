'use client';

import { useActionState } from 'react';
import { Button } from '@/components/ui/button';
import { Field, FormAlert } from '@/components/ui/field';
import type { FormState } from '@/lib/http/form-state';
import { acceptInviteAction, acceptWithNewAccountAction } from './actions';

export function AcceptInviteForm({ token }: { token: string }) {
  const [state, action, pending] = useActionState<FormState, FormData>(acceptInviteAction, {});
  return (
    <form action={action} className="space-y-4">
      <input type="hidden" name="token" value={token} />
      <FormAlert message={state.message} />
      <Button type="submit" className="w-full" disabled={pending}>
        Join the team
      </Button>
    </form>
  );
}

export function NewAccountInviteForm({ token, email }: { token: string; email: string }) {
  const [state, action, pending] = useActionState<FormState, FormData>(acceptWithNewAccountAction, {});
  return (
    <form action={action} className="space-y-4" noValidate>
      <input type="hidden" name="token" value={token} />
      <FormAlert message={state.message} />
      <Field label="E-mail" name="email-shown" value={email} readOnly disabled />
      <Field label="Your name" name="name" autoComplete="name" defaultValue={state.values?.name ?? ''} errors={state.fieldErrors?.name} />
      <Field label="Password" name="password" type="password" autoComplete="new-password" hint="At least 10 characters; common and easy-to-guess passwords are refused." errors={state.fieldErrors?.password} />
      <Button type="submit" className="w-full" disabled={pending}>
        Create account and join
      </Button>
    </form>
  );
}
