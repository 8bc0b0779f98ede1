/**
 * Helpers for the pipeline integration tests: sign-in per demo role, multipart uploads, waiting on jobs, reading
 * the SSE stream, and a look at what the server left in its database and data folder.
 */
import Database from 'better-sqlite3';
import { existsSync, readdirSync, statSync } from 'node:fs';
import path from 'node:path';
import { DEMO_PASSWORD_DEFAULT, DEMO_PROJECTS, DEMO_USERS } from '@/lib/data/demo';
import { GdsiiWriter } from '@/lib/layout/gdsii-writer';
import type { TeamRole } from '@/lib/auth/permissions';
import { signIn, type TestClient } from '../support/http';

export const PROJECT = DEMO_PROJECTS[0].id;
export const OTHER_PROJECT = DEMO_PROJECTS[1].id;

export function signInAs(baseUrl: string, role: TeamRole): Promise<TestClient> {
  const u = DEMO_USERS.find((x) => x.role === role);
  if (!u) throw new Error(`no demo user with role ${role}`);
  return signIn(baseUrl, u.email, DEMO_PASSWORD_DEFAULT);
}

/** Invented test layout: a 1 mm die outline on 0/0 and three 400 µm trenches 2, 5 and 20 µm wide on 5/0 (dbu 1 nm). */
export const TRENCH_WIDTHS_UM = [2, 5, 20];
export function trenchLayoutGds(): Uint8Array {
  const w = new GdsiiWriter({ libraryName: 'ITEST', dbuUm: 0.001 });
  w.beginCell('TOP');
  w.rect(0, 0, 0, 0, 1_000_000, 1_000_000);
  TRENCH_WIDTHS_UM.forEach((width, k) => w.rect(5, 0, (200 + 200 * k) * 1000, 300_000, (200 + 200 * k + width) * 1000, 700_000));
  w.endCell();
  return w.finish();
}

/** A heavier layout (a few seconds of analysis at a fine pixel): a 4 mm die with a 60 × 60 array of 6 µm holes. */
export function slowLayoutGds(): Uint8Array {
  const w = new GdsiiWriter({ libraryName: 'ITEST_SLOW', dbuUm: 0.001 });
  w.beginCell('HOLE');
  w.rect(5, 0, 0, 0, 6000, 6000);
  w.endCell();
  w.beginCell('TOP');
  w.rect(0, 0, 0, 0, 4_000_000, 4_000_000);
  w.aref('HOLE', 60, 60, [200_000, 200_000], [200_000 + 60 * 60_000, 200_000], [200_000, 200_000 + 60 * 60_000]);
  w.endCell();
  return w.finish();
}

/** Invented test model (not a real recipe): continuous etch, 50 µm target. */
export const TEST_MODEL = {
  name: 'integration test model',
  version: 'it-1',
  openRateUmPerMin: 4,
  reactionProbability: 0.2,
  loading: { coefficient: 0.3, lengthUm: 500 },
  etch: { timeMin: 15, targetDepthUm: 50, toleranceUm: 2, maxAspectRatio: 40 },
  mode: 'continuous',
};

export const TRENCH_SETTINGS = { etchLayers: [{ layer: 5, datatype: 0 }], densityWindows: [{ windowUm: 100, stepUm: 50 }] };

export function upload(client: TestClient, url: string, bytes: Uint8Array | string, fileName: string, fields: Record<string, string> = {}): Promise<Response> {
  const form = new FormData();
  for (const [k, v] of Object.entries(fields)) form.set(k, v);
  form.set('file', new Blob([typeof bytes === 'string' ? bytes : new Uint8Array(bytes)]), fileName);
  return client.request(url, { method: 'POST', body: form });
}

export async function json<T = Record<string, unknown>>(res: Response): Promise<T> {
  return (await res.json()) as T;
}

export type ErrorBody = { error: { code: string; message: string; fieldErrors?: Record<string, string[]> } };

export async function uploadRevision(client: TestClient, bytes: Uint8Array, name: string): Promise<{ id: string; layoutId: string }> {
  const res = await upload(client, `/api/v1/projects/${PROJECT}/layouts`, bytes, `${name}.gds`, { name });
  if (res.status !== 201) throw new Error(`upload failed: ${res.status} ${await res.text()}`);
  return (await json<{ revision: { id: string; layoutId: string } }>(res)).revision;
}

export async function startAnalysis(client: TestClient, body: Record<string, unknown>): Promise<string> {
  const res = await client.post(`/api/v1/projects/${PROJECT}/analyses`, body);
  if (res.status !== 202) throw new Error(`create analysis failed: ${res.status} ${await res.text()}`);
  return (await json<{ analysis: { id: string } }>(res)).analysis.id;
}

export type AnalysisState = { status: string; stage: string | null; progress: number; errorMessage: string | null; errorCode: string | null; attempts: number };

export async function analysisState(client: TestClient, id: string): Promise<AnalysisState> {
  const res = await client.get(`/api/v1/analyses/${id}`);
  if (res.status !== 200) throw new Error(`status failed: ${res.status} ${await res.text()}`);
  return (await json<{ analysis: AnalysisState }>(res)).analysis;
}

export async function waitFor(client: TestClient, id: string, statuses: string[], timeoutMs = 120_000): Promise<AnalysisState> {
  const deadline = Date.now() + timeoutMs;
  for (;;) {
    const s = await analysisState(client, id);
    if (statuses.includes(s.status)) return s;
    if (Date.now() > deadline) throw new Error(`analysis ${id} still ${s.status} (${s.stage}) after ${timeoutMs} ms`);
    await new Promise((r) => setTimeout(r, 200));
  }
}

export type SseEvent = { id: number; event: string; data: Record<string, unknown> };

/** Reads the analysis's event stream until it ends (or the timeout), returning every event in arrival order. */
export async function readEvents(client: TestClient, id: string, timeoutMs = 120_000): Promise<SseEvent[]> {
  const res = await client.request(`/api/v1/analyses/${id}/events`, { signal: AbortSignal.timeout(timeoutMs) });
  if (res.status !== 200 || !res.body) throw new Error(`events failed: ${res.status}`);
  const events: SseEvent[] = [];
  const decoder = new TextDecoder();
  let buffer = '';
  for await (const chunk of res.body as unknown as AsyncIterable<Uint8Array>) {
    buffer += decoder.decode(chunk, { stream: true });
    let cut: number;
    while ((cut = buffer.indexOf('\n\n')) >= 0) {
      const block = buffer.slice(0, cut);
      buffer = buffer.slice(cut + 2);
      if (block.startsWith(':')) continue;
      const field = (name: string) => block.split('\n').find((l) => l.startsWith(`${name}: `))?.slice(name.length + 2);
      events.push({ id: Number(field('id')), event: field('event') ?? '', data: JSON.parse(field('data') ?? '{}') });
    }
  }
  return events;
}

/** Row counts and files the server keeps (to check that bad input leaves nothing behind). */
export function leftovers(dbFile: string): { layouts: number; revisions: number; analyses: number; layoutFiles: number; tmpFiles: number; resultDirs: number } {
  const db = new Database(dbFile, { readonly: true, fileMustExist: true });
  try {
    const n = (table: string) => (db.prepare(`SELECT count(*) AS n FROM ${table}`).get() as { n: number }).n;
    const dir = path.dirname(dbFile);
    return {
      layouts: n('layouts'),
      revisions: n('layout_revisions'),
      analyses: n('analyses'),
      layoutFiles: countFiles(path.join(dir, 'layouts')),
      tmpFiles: countFiles(path.join(dir, 'tmp')),
      resultDirs: existsSync(path.join(dir, 'analyses')) ? readdirSync(path.join(dir, 'analyses')).length : 0,
    };
  } finally {
    db.close();
  }
}

function countFiles(dir: string): number {
  if (!existsSync(dir)) return 0;
  let n = 0;
  for (const e of readdirSync(dir)) {
    const p = path.join(dir, e);
    n += statSync(p).isDirectory() ? countFiles(p) : 1;
  }
  return n;
}

/** Stored path of a revision (relative to the data folder). */
export function storedPathOf(dbFile: string, revisionId: string): string {
  const db = new Database(dbFile, { readonly: true, fileMustExist: true });
  try {
    return (db.prepare('SELECT stored_path AS p FROM layout_revisions WHERE id = ?').get(revisionId) as { p: string }).p;
  } finally {
    db.close();
  }
}
