import type { InputHTMLAttributes, ReactNode } from 'react';

/**
 * Labelled input with its field-level error messages. The input is marked aria-invalid and described by the
 * messages so screen readers announce them.
 */
export function Field({
  label,
  name,
  errors,
  hint,
  ...input
}: InputHTMLAttributes<HTMLInputElement> & { label: string; name: string; errors?: string[]; hint?: ReactNode }) {
  const id = input.id ?? `field-${name}`;
  const invalid = Boolean(errors && errors.length > 0);
  return (
    <div className="space-y-1.5">
      <label htmlFor={id} className="block text-sm font-medium text-ink-800">
        {label}
      </label>
      <input
        {...input}
        id={id}
        name={name}
        aria-invalid={invalid || undefined}
        aria-describedby={invalid ? `${id}-errors` : undefined}
        className={`block w-full rounded-md border bg-white px-3 py-2 text-sm text-ink-900 shadow-xs placeholder:text-ink-300 focus:outline-none focus:ring-2 ${
          invalid ? 'border-fail focus:ring-fail/30' : 'border-wafer-300 focus:border-copper-500 focus:ring-copper-400/30'
        }`}
      />
      {hint && !invalid ? <p className="text-xs text-ink-500">{hint}</p> : null}
      {invalid ? (
        <ul id={`${id}-errors`} className="space-y-0.5 text-xs text-fail" data-testid={`error-${name}`}>
          {errors?.map((e) => <li key={e}>{e}</li>)}
        </ul>
      ) : null}
    </div>
  );
}

/** Form-level message (e.g. "E-mail or password is wrong."). */
export function FormAlert({ message, tone = 'error' }: { message?: string; tone?: 'error' | 'success' }) {
  if (!message) return null;
  const cls = tone === 'error' ? 'border-fail/30 bg-fail/5 text-fail' : 'border-pass/30 bg-pass/5 text-pass';
  return (
    <p role={tone === 'error' ? 'alert' : 'status'} className={`rounded-md border px-3 py-2 text-sm ${cls}`} data-testid="form-message">
      {message}
    </p>
  );
}
