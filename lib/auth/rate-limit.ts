/**
 * Failed sign-in limiter, in memory: counts failures per key (the lower-cased e-mail) in a sliding window.
 * State lives in this process only, so it resets on restart and is not shared between several server
 * processes; good enough for one `next start`, stated in the README.
 */
export class FailureLimiter {
  private readonly failures = new Map<string, number[]>();

  constructor(
    readonly maxFailures: number,
    readonly windowMs: number,
  ) {}

  /** Milliseconds until `key` may try again, or 0 when it may try now. */
  retryAfterMs(key: string, now = Date.now()): number {
    const recent = this.recent(key, now);
    if (recent.length < this.maxFailures) return 0;
    const oldest = recent[recent.length - this.maxFailures] ?? now;
    return Math.max(0, oldest + this.windowMs - now);
  }

  recordFailure(key: string, now = Date.now()): void {
    const recent = this.recent(key, now);
    recent.push(now);
    this.failures.set(key, recent);
  }

  reset(key: string): void {
    this.failures.delete(key);
  }

  private recent(key: string, now: number): number[] {
    const list = (this.failures.get(key) ?? []).filter((t) => t > now - this.windowMs);
    if (list.length === 0) this.failures.delete(key);
    return list;
  }
}

const holder = globalThis as typeof globalThis & { __trenchantSignInLimiter?: FailureLimiter };

/** 5 failed sign-ins per e-mail per 15 minutes (TRENCHANT_SIGNIN_MAX_FAILURES overrides the count). */
export function signInLimiter(): FailureLimiter {
  holder.__trenchantSignInLimiter ??= new FailureLimiter(
    Number(process.env.TRENCHANT_SIGNIN_MAX_FAILURES ?? 5) || 5,
    15 * 60_000,
  );
  return holder.__trenchantSignInLimiter;
}
