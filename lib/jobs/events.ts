/**
 * In-process fan-out of job progress to server-sent-event subscribers. Kept on globalThis because Next may load
 * this module in several bundles of the same process (instrumentation, route handlers). A BullMQ worker process
 * sets a relay that forwards every event to Redis; the server re-emits those with emitRelayedJobEvent().
 */
import { EventEmitter } from 'node:events';
import type { AnalysisStatus } from '@/db/schema';

export type JobEvent = {
  analysisId: string;
  status: AnalysisStatus;
  /** Current stage (worker stage names, e.g. 'reading', 'coverage', ..., 'writing', 'saving'); null while queued. */
  stage: string | null;
  /** Overall progress 0..1 (non-decreasing within one attempt). */
  progress: number;
  errorMessage: string | null;
};

const holder = globalThis as typeof globalThis & { __trenchantJobEvents?: EventEmitter; __trenchantJobEventRelay?: (event: JobEvent) => void };

function bus(): EventEmitter {
  if (!holder.__trenchantJobEvents) {
    holder.__trenchantJobEvents = new EventEmitter();
    holder.__trenchantJobEvents.setMaxListeners(0);
  }
  return holder.__trenchantJobEvents;
}

export function publishJobEvent(event: JobEvent): void {
  bus().emit(event.analysisId, event);
  holder.__trenchantJobEventRelay?.(event);
}

/** Worker processes: also send every event published here to `relay` (null stops relaying). */
export function setJobEventRelay(relay: ((event: JobEvent) => void) | null): void {
  holder.__trenchantJobEventRelay = relay ?? undefined;
}

/** An event that arrived from another process: to local subscribers only (never relayed back). */
export function emitRelayedJobEvent(event: JobEvent): void {
  bus().emit(event.analysisId, event);
}

/** Calls `listener` for every event of one analysis until the returned function is called. */
export function subscribeJobEvents(analysisId: string, listener: (event: JobEvent) => void): () => void {
  bus().on(analysisId, listener);
  return () => bus().off(analysisId, listener);
}

export function isTerminal(status: AnalysisStatus): boolean {
  return status === 'done' || status === 'failed' || status === 'cancelled';
}
