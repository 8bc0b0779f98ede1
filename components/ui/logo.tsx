/**
 * Trenchant's mark: a cross-section of one etched trench — two copper mask blocks over a silicon body with a
 * slightly tapered trench cut between them.
 */
export function LogoMark({ size = 28, className }: { size?: number; className?: string }) {
  return (
    <svg width={size} height={size} viewBox="0 0 32 32" aria-hidden="true" className={className}>
      <rect x="0" y="0" width="32" height="32" rx="7" fill="#0b1219" />
      <path d="M4 13h9.2l1.1 12.5h3.4L18.8 13H28v14.5a1.5 1.5 0 0 1-1.5 1.5h-21A1.5 1.5 0 0 1 4 27.5Z" fill="#4fa39b" />
      <path d="M14.3 25.5h3.4l-.25 2.8h-2.9Z" fill="#2f8279" opacity="0.6" />
      <rect x="4" y="8" width="9.2" height="5" rx="1" fill="#d9925f" />
      <rect x="18.8" y="8" width="9.2" height="5" rx="1" fill="#d9925f" />
    </svg>
  );
}

/** Mark plus word mark. `tone` picks the word colour for dark or light backgrounds. */
export function Logo({ tone = 'light', size = 28 }: { tone?: 'light' | 'dark'; size?: number }) {
  return (
    <span className="inline-flex items-center gap-2.5">
      <LogoMark size={size} />
      <span
        className={`text-[1.05rem] font-semibold tracking-[0.14em] uppercase ${tone === 'light' ? 'text-wafer-50' : 'text-ink-900'}`}
      >
        Trenchant
      </span>
    </span>
  );
}
