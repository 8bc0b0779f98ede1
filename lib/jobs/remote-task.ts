/**
 * Everything a queue worker without the database needs to run one analysis, carried in the BullMQ job's data, and
 * what it hands back as the job's return value (the server records it: lib/jobs/remote-results.ts). Settings and
 * model are the stored JSON (the worker validates them, as the embedded pool does); the layout is named by its
 * storage key (lib/storage), so the worker needs the same storage settings as the server, not its data folder.
 */
import type { AnalysisTaskResult } from '@/lib/pipeline/worker';
import type { ResultBudget } from './job-limits';

export type RemoteTask = {
  storedPath: string;
  topCell: string;
  settings: unknown;
  model: unknown;
  /** What the job may write, decided by the server when it hands the job over. */
  budget: ResultBudget;
};

/** The job's return value from a worker without the database. `remote` tells it from a database worker's. */
export type RemoteJobResult = (AnalysisTaskResult | { ok: false; code: 'over-quota' | 'missing-revision' | 'worker-crash'; message: string }) & { remote: true };

export function isRemoteJobResult(v: unknown): v is RemoteJobResult {
  return typeof v === 'object' && v !== null && (v as { remote?: unknown }).remote === true && typeof (v as { ok?: unknown }).ok === 'boolean';
}
