import { unstable_rethrow } from 'next/navigation';
import { z } from 'zod';
import { ApiError, zodFieldErrors } from './errors';

/** What a server action hands back to its form: a form-level message and per-field messages. */
export type FormState = {
  ok?: boolean;
  message?: string;
  fieldErrors?: Record<string, string[]>;
  /** echoed non-secret inputs so the form keeps what the user typed */
  values?: Record<string, string>;
};

/** The string fields of a FormData (files and repeated keys ignored; the last value wins). */
export function formValues(formData: FormData): Record<string, string> {
  const out: Record<string, string> = {};
  for (const [k, v] of formData.entries()) if (typeof v === 'string' && !k.startsWith('$ACTION')) out[k] = v;
  return out;
}

/**
 * Turns an error thrown inside a server action into form state. Next's redirect/notFound signals are re-thrown;
 * unexpected errors are logged and shown as one generic line.
 */
export function errorToFormState(error: unknown, values?: Record<string, string>): FormState {
  unstable_rethrow(error);
  if (error instanceof ApiError) return { message: error.message, fieldErrors: error.fieldErrors, values };
  if (error instanceof z.ZodError) {
    return { message: 'Please correct the marked fields.', fieldErrors: zodFieldErrors(error), values };
  }
  console.error('[trenchant] unhandled error in server action:', error);
  return { message: 'Something went wrong on the server. Please try again.', values };
}
