'use client';

import { useActionState } from 'react';
import { Button } from '@/components/ui/button';
import { Field, FormAlert } from '@/components/ui/field';
import type { FormState } from '@/lib/http/form-state';
import { signUpAction } from '../actions';

export function SignUpForm({ next }: { next: string }) {
  const [state, action, pending] = useActionState<FormState, FormData>(signUpAction, {});
  const v = state.values ?? {};
  return (
    <form action={action} className="space-y-4" noValidate>
      <input type="hidden" name="next" value={next} />
      <FormAlert message={state.message} />
      <Field label="Your name" name="name" autoComplete="name" defaultValue={v.name ?? ''} errors={state.fieldErrors?.name} />
      <Field label="E-mail" name="email" type="email" autoComplete="email" defaultValue={v.email ?? ''} errors={state.fieldErrors?.email} />
      <Field
        label="Password"
        name="password"
        type="password"
        autoComplete="new-password"
        hint="At least 10 characters; common and easy-to-guess passwords are refused."
        errors={state.fieldErrors?.password}
      />
      <Field label="New team (optional)" name="teamName" defaultValue={v.teamName ?? ''} errors={state.fieldErrors?.teamName} />
      <Button type="submit" className="w-full" disabled={pending}>
        {pending ? 'Creating…' : 'Create account'}
      </Button>
    </form>
  );
}
