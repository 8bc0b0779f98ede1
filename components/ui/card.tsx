import type { ReactNode } from 'react';

export function Card({ children, className = '' }: { children: ReactNode; className?: string }) {
  return <section className={`rounded-lg border border-wafer-200 bg-white shadow-xs ${className}`}>{children}</section>;
}

export function PageTitle({ title, kicker, actions }: { title: string; kicker?: ReactNode; actions?: ReactNode }) {
  return (
    <div className="mb-6 flex flex-wrap items-end justify-between gap-4">
      <div>
        {kicker ? <p className="mb-1 text-xs font-semibold tracking-[0.12em] text-copper-600 uppercase">{kicker}</p> : null}
        <h1 className="text-2xl font-semibold tracking-tight text-ink-900">{title}</h1>
      </div>
      {actions ? <div className="flex items-center gap-2">{actions}</div> : null}
    </div>
  );
}
