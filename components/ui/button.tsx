import type { ButtonHTMLAttributes } from 'react';

type Variant = 'primary' | 'secondary' | 'ghost' | 'danger';

const VARIANT: Record<Variant, string> = {
  primary: 'bg-copper-500 text-white hover:bg-copper-600 disabled:bg-wafer-200 disabled:text-ink-500',
  secondary: 'bg-white text-ink-900 ring-1 ring-wafer-300 hover:bg-wafer-50 disabled:bg-wafer-100 disabled:text-ink-500',
  ghost: 'text-ink-700 hover:bg-wafer-200/60',
  danger: 'bg-white text-fail ring-1 ring-fail/40 hover:bg-fail/5',
};

/** Class string of a button, for links styled as buttons. */
export function buttonClass(variant: Variant = 'primary', extra = ''): string {
  return `inline-flex items-center justify-center gap-2 rounded-md px-3.5 py-2 text-sm font-medium transition-colors disabled:cursor-not-allowed ${VARIANT[variant]} ${extra}`;
}

export function Button({
  variant = 'primary',
  className = '',
  ...props
}: ButtonHTMLAttributes<HTMLButtonElement> & { variant?: Variant }) {
  return <button {...props} className={buttonClass(variant, className)} />;
}
