'use client';

import { useActionState } from 'react';
import { Button } from '@/components/ui/button';
import { Field, FormAlert } from '@/components/ui/field';
import type { FormState } from '@/lib/http/form-state';
import { signInAction } from '../actions';

export function SignInForm({ next }: { next: string }) {
  const [state, action, pending] = useActionState<FormState, FormData>(signInAction, {});
  return (
    <form action={action} className="space-y-4" noValidate>
      <input type="hidden" name="next" value={next} />
      <FormAlert message={state.message} />
      <Field
        label="E-mail"
        name="email"
        type="email"
        autoComplete="username"
        defaultValue={state.values?.email ?? ''}
        errors={state.fieldErrors?.email}
      />
      <Field label="Password" name="password" type="password" autoComplete="current-password" errors={state.fieldErrors?.password} />
      <Button type="submit" className="w-full" disabled={pending}>
        {pending ? 'Signing in…' : 'Sign in'}
      </Button>
    </form>
  );
}
