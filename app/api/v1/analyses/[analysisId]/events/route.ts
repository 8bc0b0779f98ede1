import { getDb } from '@/db/client';
import { idParam } from '@/lib/data/schemas';
import { toErrorResponse } from '@/lib/http/errors';
import { requireAnalysisAccess } from '@/lib/jobs/access';
import { getAnalysisView } from '@/lib/jobs/analyses';
import { isTerminal, subscribeJobEvents, type JobEvent } from '@/lib/jobs/events';

export const runtime = 'nodejs';
export const dynamic = 'force-dynamic';

const HEARTBEAT_MS = 15_000;

/**
 * Server-sent events of one analysis: `event: progress` with `{ status, stage, progress, errorMessage }` — the
 * current state first, then every change, progress never decreasing within a run — and a last `event: end` when
 * the analysis is done, failed or cancelled; then the stream closes. Comment lines keep idle connections open.
 */
export async function GET(request: Request, ctx: { params: Promise<{ analysisId: string }> }) {
  try {
    const analysisId = idParam.parse((await ctx.params).analysisId);
    await requireAnalysisAccess(request, analysisId, 'project.read');
    const encoder = new TextEncoder();
    let cleanup = () => {};
    const stream = new ReadableStream<Uint8Array>({
      start(controller) {
        let seq = 0;
        let closed = false;
        let last: { status: string; progress: number; stage: string | null } | null = null;
        const send = (event: string, data: unknown) => {
          if (closed) return;
          controller.enqueue(encoder.encode(`id: ${++seq}\nevent: ${event}\ndata: ${JSON.stringify(data)}\n\n`));
        };
        const close = () => {
          if (closed) return;
          closed = true;
          cleanup();
          try {
            controller.close();
          } catch {
            // already closed by the client
          }
        };
        const onEvent = (e: Omit<JobEvent, 'analysisId'>) => {
          // Drop stale updates that arrive after a newer state was sent (keeps the stream in order).
          if (last && last.status === e.status && e.stage === last.stage && e.progress < last.progress) return;
          if (last && last.status === 'running' && e.status === 'running' && e.progress < last.progress) return;
          last = { status: e.status, progress: e.progress, stage: e.stage };
          send('progress', { status: e.status, stage: e.stage, progress: e.progress, errorMessage: e.errorMessage });
          if (isTerminal(e.status)) {
            send('end', { status: e.status, errorMessage: e.errorMessage });
            close();
          }
        };
        // Subscribe before reading the current state so no change falls in between.
        const unsubscribe = subscribeJobEvents(analysisId, onEvent);
        const heartbeat = setInterval(() => {
          if (!closed) controller.enqueue(encoder.encode(': keep-alive\n\n'));
        }, HEARTBEAT_MS);
        cleanup = () => {
          unsubscribe();
          clearInterval(heartbeat);
        };
        request.signal.addEventListener('abort', close);
        const now = getAnalysisView(getDb(), analysisId);
        onEvent({ status: now.status, stage: now.stage, progress: now.progress, errorMessage: now.errorMessage });
      },
      cancel() {
        cleanup();
      },
    });
    return new Response(stream, {
      headers: { 'content-type': 'text/event-stream; charset=utf-8', 'cache-control': 'no-cache, no-transform', connection: 'keep-alive', 'x-accel-buffering': 'no' },
    });
  } catch (error) {
    return toErrorResponse(error);
  }
}
