/**
 * A second thread behind a synchronous call. The analysis is one synchronous function (so it can run inside a
 * worker of the job pool and in the CLI alike), so it cannot await a worker's message; instead the caller posts a
 * task, does its own share of the work, then blocks on a shared counter (Atomics.wait) and reads the reply with
 * receiveMessageOnPort. The helper is started once and kept for several tasks, so its start-up and module loading
 * (≈ 0.5 s under tsx) happen while the caller is still busy with something else.
 *
 * Tasks are numbered; the helper raises `done[0]` to a task's number after posting its reply. Replies to tasks the
 * caller stopped waiting for are dropped. A helper that fails, never starts or does not answer in time gives
 * `null`, and every user of this module then does the missing share itself — slower, never different.
 */
import { existsSync } from 'node:fs';
import { availableParallelism, loadavg } from 'node:os';
import { fileURLToPath } from 'node:url';
import { isMainThread, MessageChannel, receiveMessageOnPort, Worker, type MessagePort, type TransferListItem } from 'node:worker_threads';

/** What the helper thread's entry receives as workerData. */
export interface HelperWorkerData {
  port: MessagePort;
  done: Int32Array;
  /** Started from a worker thread (the app's analysis pool, which runs at lowered priority): lower the helper's too. */
  lowerPriority: boolean;
}

export interface HelperRequest {
  id: number;
  kind: string;
  payload: unknown;
}

export interface HelperReply {
  id: number;
  ok: boolean;
  result?: unknown;
  error?: string;
}

/** The caller's side of a helper thread. */
export interface TaskThread {
  /** Post a task; returns its number for `wait`. */
  post(kind: string, payload: unknown, transfer?: TransferListItem[]): number;
  /** The task's result, or null when the helper failed it or did not answer within `timeoutMs`. */
  wait(id: number, timeoutMs: number): unknown;
  /** Stop the thread (idempotent). */
  close(): void;
}

export class SyncHelper implements TaskThread {
  private lastId = 0;
  private closed = false;
  /** Failure message of the last task that failed (for diagnostics and tests). */
  lastError: string | null = null;

  constructor(
    private readonly worker: Worker,
    private readonly port: MessagePort,
    private readonly done: Int32Array,
  ) {}

  post(kind: string, payload: unknown, transfer: TransferListItem[] = []): number {
    const id = ++this.lastId;
    if (!this.closed) this.port.postMessage({ id, kind, payload } satisfies HelperRequest, transfer);
    return id;
  }

  wait(id: number, timeoutMs: number): unknown {
    if (this.closed) return null;
    const until = performance.now() + timeoutMs;
    for (;;) {
      const seen = Atomics.load(this.done, 0);
      if (seen >= id) break;
      const left = until - performance.now();
      if (left <= 0) {
        this.lastError = `no answer to task ${id} in ${Math.round(timeoutMs)} ms`;
        return null;
      }
      Atomics.wait(this.done, 0, seen, Math.min(1000, left));
    }
    // The reply was posted before the counter was raised; it can still take a moment to be readable here.
    for (let k = 0; k < 200; k++) {
      const msg = receiveMessageOnPort(this.port)?.message as HelperReply | undefined;
      if (!msg) {
        Atomics.wait(this.done, 0, Atomics.load(this.done, 0), 5);
        continue;
      }
      if (msg.id < id) continue; // a reply nobody waits for any more
      if (msg.id > id) break; // cannot happen (tasks run in order); treat as lost
      if (msg.ok) return msg.result;
      this.lastError = msg.error ?? 'failed';
      return null;
    }
    this.lastError = `reply to task ${id} did not arrive`;
    return null;
  }

  close(): void {
    if (this.closed) return;
    this.closed = true;
    void this.worker.terminate();
    this.port.close();
  }
}

/**
 * Start a helper thread: the compiled entry `built` (beside the bundle) when it exists, else the TypeScript
 * `source` through tsx's loader (CLI, tests and benchmarks run from source). Null when neither can start.
 */
export function startSyncHelper(built: URL, source: URL): SyncHelper | null {
  const channel = new MessageChannel();
  const done = new Int32Array(new SharedArrayBuffer(4));
  const data: HelperWorkerData = { port: channel.port2, done, lowerPriority: !isMainThread };
  const opts = { workerData: data, transferList: [channel.port2] };
  let worker: Worker | null = null;
  try {
    if (built.protocol === 'file:' && existsSync(fileURLToPath(built))) worker = new Worker(built, opts);
    else if (source.protocol === 'file:' && existsSync(fileURLToPath(source)) && typeof import.meta.resolve === 'function') {
      const tsx = import.meta.resolve('tsx/esm/api');
      const boot = `import(${JSON.stringify(tsx)}).then((m) => { m.register(); return import(${JSON.stringify(source.href)}); });`;
      worker = new Worker(boot, { ...opts, eval: true });
    }
  } catch {
    worker = null;
  }
  if (!worker) {
    channel.port1.close();
    return null;
  }
  worker.unref();
  // A crash is seen as a missing answer (wait times out); keep the process from treating it as unhandled.
  worker.on('error', () => {});
  return new SyncHelper(worker, channel.port1, done);
}

/** The helper side: answer each task with `handlers[kind](payload)`; raise `done` after each reply. */
export function serveTasks(data: HelperWorkerData, handlers: Record<string, (payload: unknown) => { result: unknown; transfer?: TransferListItem[] }>): void {
  const { port, done } = data;
  port.on('message', (msg: HelperRequest) => {
    let reply: HelperReply;
    let transfer: TransferListItem[] = [];
    try {
      const handler = handlers[msg.kind];
      if (!handler) throw new Error(`unknown task ${msg.kind}`);
      const out = handler(msg.payload);
      reply = { id: msg.id, ok: true, result: out.result };
      transfer = out.transfer ?? [];
    } catch (err) {
      reply = { id: msg.id, ok: false, error: err instanceof Error ? err.message : String(err) };
    }
    try {
      port.postMessage(reply, transfer);
    } catch (err) {
      port.postMessage({ id: msg.id, ok: false, error: err instanceof Error ? err.message : String(err) } satisfies HelperReply);
    }
    Atomics.store(done, 0, msg.id);
    Atomics.notify(done, 0);
  });
}

/**
 * Whether a second core looks free: the 1-minute load average (which counts this process's running thread) below
 * the number of cores. Splits with a large fixed cost (the union: copies, joins and the helper's own JIT warm-up of
 * clipper) are only worth it then; on a busy machine they cost CPU and save no time (measured on a shared 2-core
 * machine at load 3–4: the two-thread union took 2.5–2.8 s where one thread took 2.2 s). Results never depend on it.
 */
export function secondCoreFree(): boolean {
  const cores = availableParallelism();
  const load = loadavg()[0] ?? 0;
  // loadavg() is all zeros where the platform has none (Windows): treat as free.
  return cores >= 2 && load < cores;
}
