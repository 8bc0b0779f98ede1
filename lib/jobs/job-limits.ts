/**
 * How much a job may do: attempts before it is marked failed, jobs at once, and what its results may take of the
 * team's limits (lib/jobs/team-limits.ts). Shared by the embedded runner and the BullMQ / remote workers.
 */
import { availableParallelism } from 'node:os';
import { getDb } from '@/db/client';
import { getTeamLimits, teamStoredResultBytes } from './team-limits';

const MiB = 1024 * 1024;

/** Most times a job is picked up (first run + runs after restarts) before it is marked failed. */
export function jobMaxAttempts(): number {
  const env = Number(process.env.TRENCHANT_JOB_MAX_ATTEMPTS);
  return Number.isInteger(env) && env >= 1 ? env : 3;
}

/** Jobs run at once: TRENCHANT_JOB_CONCURRENCY, default one per two cores, at least 1. */
export function jobConcurrency(): number {
  const env = Number(process.env.TRENCHANT_JOB_CONCURRENCY);
  if (Number.isInteger(env) && env >= 1) return env;
  return Math.max(1, Math.floor(availableParallelism() / 2));
}

export type ResultBudget = { ok: true; maxBytes: number; label: string } | { ok: false; message: string };

/**
 * What a job of this team may write: the team's per-analysis limit, or what is left of its stored-results quota
 * when that is less. A team already at its quota gets a message instead.
 */
export function resultBudgetOf(teamId: string): ResultBudget {
  if (!teamId) return { ok: true, maxBytes: Number.MAX_SAFE_INTEGER, label: 'no limit' };
  const db = getDb();
  const limits = getTeamLimits(db, teamId);
  const stored = teamStoredResultBytes(db, teamId);
  const left = limits.maxStoredBytes - stored;
  const mib = (n: number) => `${Math.round(n / MiB).toLocaleString('en-US')} MiB`;
  if (left <= 0) {
    return {
      ok: false,
      message: `This team's stored results take ${mib(stored)}, at its quota of ${mib(limits.maxStoredBytes)}; delete old analyses or ask a team admin to raise the quota on the team page.`,
    };
  }
  if (left < limits.maxAnalysisBytes) return { ok: true, maxBytes: left, label: `the ${mib(left)} left of this team's quota of ${mib(limits.maxStoredBytes)} for stored results` };
  return { ok: true, maxBytes: limits.maxAnalysisBytes, label: `this team's limit of ${mib(limits.maxAnalysisBytes)} per analysis` };
}
