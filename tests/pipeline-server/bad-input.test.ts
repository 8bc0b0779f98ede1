/**
 * Every bad input gets a clear one-line error and leaves no row and no file behind: truncated, wrong format,
 * empty, oversize and interrupted uploads; missing fields, unknown layer, invalid model or settings; a layout
 * whose reader fails inside the worker.
 */
import { request as httpRequest } from 'node:http';
import { existsSync, truncateSync } from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { TestClient } from '../support/http';
import { startTestServer, type TestServer } from '../support/server';
import { json, leftovers, PROJECT, startAnalysis, signInAs, storedPathOf, TEST_MODEL, TRENCH_SETTINGS, trenchLayoutGds, upload, uploadRevision, waitFor, type ErrorBody } from './support';

const LIMIT = 200_000;

describe('bad input is refused clearly and leaves nothing behind', () => {
  let server: TestServer;
  let designer: TestClient;
  let before: ReturnType<typeof leftovers>;
  const uploadUrl = `/api/v1/projects/${PROJECT}/layouts`;

  beforeAll(async () => {
    server = await startTestServer({ env: { TRENCHANT_MAX_UPLOAD_BYTES: String(LIMIT), TRENCHANT_JOB_CONCURRENCY: '2' } });
    designer = await signInAs(server.baseUrl, 'designer');
    before = leftovers(server.dbFile);
  });
  afterAll(() => server?.stop());

  const expectNothingNew = () => {
    const now = leftovers(server.dbFile);
    expect(now).toMatchObject({ layouts: before.layouts, revisions: before.revisions, layoutFiles: before.layoutFiles, tmpFiles: 0 });
  };

  it('truncated GDSII → 422 naming the byte offset', async () => {
    const bytes = trenchLayoutGds();
    const res = await upload(designer, uploadUrl, bytes.subarray(0, bytes.length - 10), 'cut.gds');
    expect(res.status).toBe(422);
    const { error } = await json<ErrorBody>(res);
    expect(error.message).toMatch(/^cut\.gds: .*truncated.*byte \d+/i);
    expect(error.message).not.toContain('\n');
    expectNothingNew();
  });

  it('wrong format (a PNG) → 422 naming what was expected and the first bytes', async () => {
    const png = new Uint8Array([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 0, 0, 0, 13]);
    const res = await upload(designer, uploadUrl, png, 'layout.gds');
    expect(res.status).toBe(422);
    const { error } = await json<ErrorBody>(res);
    expect(error.message).toContain('neither a GDSII stream');
    expect(error.message).toContain('89 50 4e 47');
    expectNothingNew();
  });

  it('empty file → 422', async () => {
    const res = await upload(designer, uploadUrl, new Uint8Array(0), 'empty.gds');
    expect(res.status).toBe(422);
    expect((await json<ErrorBody>(res)).error.message).toContain('empty');
    expectNothingNew();
  });

  it('a CSV with a bad row → 422 naming the line', async () => {
    const csv = '# trenchant-polygons v1\nlayer,datatype,polygon,x,y\n1,0,1,0,0\n1,0,1,ten,0\n1,0,1,5,5\n';
    const res = await upload(designer, uploadUrl, csv, 'bad.csv');
    expect(res.status).toBe(422);
    expect((await json<ErrorBody>(res)).error.message).toMatch(/line 4/);
    expectNothingNew();
  });

  it('over the size limit → 413 with the limit in the message', async () => {
    const big = new Uint8Array(LIMIT + 50_000);
    big.set(trenchLayoutGds());
    const res = await upload(designer, uploadUrl, big, 'big.gds');
    expect(res.status).toBe(413);
    expect((await json<ErrorBody>(res)).error.message).toContain('195.3 KiB');
    expectNothingNew();
  });

  it('over the limit without a Content-Length (chunked) → 413 and the partial file removed', async () => {
    const boundary = 'xTRENCHANTx';
    const head = `--${boundary}\r\nContent-Disposition: form-data; name="file"; filename="chunked.gds"\r\nContent-Type: application/octet-stream\r\n\r\n`;
    const status = await new Promise<number>((resolve, reject) => {
      const req = httpRequest(`${server.baseUrl}${uploadUrl}`, { method: 'POST', headers: { 'content-type': `multipart/form-data; boundary=${boundary}`, 'transfer-encoding': 'chunked', origin: server.baseUrl, cookie: cookieOf(designer) } }, (res) => {
        res.resume();
        resolve(res.statusCode ?? 0);
      });
      req.on('error', reject);
      req.write(head);
      const chunk = new Uint8Array(32 * 1024);
      for (let sent = 0; sent < LIMIT * 2; sent += chunk.length) req.write(chunk);
      req.end(`\r\n--${boundary}--\r\n`);
    });
    expect(status).toBe(413);
    expectNothingNew();
  });

  it('an upload interrupted mid-body leaves no temporary file and no row', async () => {
    const boundary = 'xTRENCHANTx';
    await new Promise<void>((resolve) => {
      const req = httpRequest(`${server.baseUrl}${uploadUrl}`, { method: 'POST', headers: { 'content-type': `multipart/form-data; boundary=${boundary}`, 'content-length': '150000', origin: server.baseUrl, cookie: cookieOf(designer) } });
      req.on('error', () => resolve());
      req.write(`--${boundary}\r\nContent-Disposition: form-data; name="file"; filename="cut.gds"\r\n\r\n`);
      req.write(trenchLayoutGds());
      setTimeout(() => {
        req.destroy();
        resolve();
      }, 500);
    });
    // The server notices the aborted body and cleans up; give it a moment.
    const deadline = Date.now() + 10_000;
    while (leftovers(server.dbFile).tmpFiles > 0 && Date.now() < deadline) await new Promise((r) => setTimeout(r, 100));
    expectNothingNew();
    expect((await designer.get('/api/v1/me')).status).toBe(200); // the server is still fine
  });

  it('not multipart → 415; multipart without a file → 400', async () => {
    const res = await designer.post(uploadUrl, { file: 'x' });
    expect(res.status).toBe(415);
    const form = new FormData();
    form.set('name', 'no file here');
    const noFile = await designer.request(uploadUrl, { method: 'POST', body: form });
    expect(noFile.status).toBe(400);
    expect((await json<ErrorBody>(noFile)).error.fieldErrors?.file).toBeDefined();
    expectNothingNew();
  });

  describe('analysis requests', () => {
    let revisionId = '';
    let analysesBefore = 0;
    beforeAll(async () => {
      revisionId = (await uploadRevision(designer, trenchLayoutGds(), 'bad-input trenches')).id;
      analysesBefore = leftovers(server.dbFile).analyses;
    });
    const create = (body: unknown) => designer.post(`/api/v1/projects/${PROJECT}/analyses`, body);

    it('missing fields → 400 with field errors', async () => {
      const res = await create({});
      expect(res.status).toBe(400);
      const { error } = await json<ErrorBody>(res);
      expect(Object.keys(error.fieldErrors ?? {})).toEqual(expect.arrayContaining(['revisionId', 'settings']));
      const noModel = await create({ revisionId, settings: TRENCH_SETTINGS });
      expect(noModel.status).toBe(400);
      expect((await json<ErrorBody>(noModel)).error.message).toContain('modelId');
      const notJson = await designer.request(`/api/v1/projects/${PROJECT}/analyses`, { method: 'POST', body: '{oops', headers: { 'content-type': 'application/json' } });
      expect(notJson.status).toBe(400);
    });

    it('unknown layer → 422 naming the layers present', async () => {
      const res = await create({ revisionId, settings: { etchLayers: [{ layer: 9, datatype: 1 }] }, model: TEST_MODEL });
      expect(res.status).toBe(422);
      expect((await json<ErrorBody>(res)).error.message).toBe('Layer 9/1 is not in this layout; layers present: 0/0, 5/0.');
    });

    it('a model that fails validation → 422 with the field in error', async () => {
      const res = await create({ revisionId, settings: TRENCH_SETTINGS, model: { ...TEST_MODEL, reactionProbability: 1.7 } });
      expect(res.status).toBe(422);
      const { error } = await json<ErrorBody>(res);
      expect(error.message).toMatch(/^The process model is not valid: reactionProbability/);
      expect(error.fieldErrors?.['model.reactionProbability']).toBeDefined();
      const unknown = await create({ revisionId, settings: TRENCH_SETTINGS, modelId: 'no-such-model' });
      expect(unknown.status).toBe(422);
    });

    it('settings out of range → 400 with the setting named', async () => {
      const res = await create({ revisionId, settings: { ...TRENCH_SETTINGS, limits: { minDensity: 0.8, maxDensity: 0.2 } }, model: TEST_MODEL });
      expect(res.status).toBe(400);
      expect((await json<ErrorBody>(res)).error.fieldErrors?.['settings.limits.minDensity']).toBeDefined();
    });

    it('none of the refused requests created an analysis', () => {
      expect(leftovers(server.dbFile).analyses).toBe(analysesBefore);
    });

    it('a layout whose reader fails in the worker → failed with the reader message; no result files; server fine', async () => {
      const rev = await uploadRevision(designer, trenchLayoutGds(), 'damaged later');
      // Damage the stored file behind the server's back (disk corruption, a bad copy…).
      truncateSync(path.join(path.dirname(server.dbFile), storedPathOf(server.dbFile, rev.id)), 100);
      const id = await startAnalysis(designer, { revisionId: rev.id, settings: TRENCH_SETTINGS, model: TEST_MODEL });
      const state = await waitFor(designer, id, ['done', 'failed', 'cancelled']);
      expect(state.status).toBe('failed');
      expect(state.errorCode).toBe('layout-unreadable');
      expect(state.errorMessage).toMatch(/truncated.*byte \d+/i);
      const results = await designer.get(`/api/v1/analyses/${id}/results`);
      expect(results.status).toBe(409);
      expect((await json<ErrorBody>(results)).error.message).toContain('it failed');
      expect(existsSync(path.join(path.dirname(server.dbFile), 'analyses', id))).toBe(false);
      // Other jobs still run afterwards.
      const ok = await startAnalysis(designer, { revisionId, settings: TRENCH_SETTINGS, model: TEST_MODEL });
      expect((await waitFor(designer, ok, ['done', 'failed'])).status).toBe('done');
    });
  });

  it('an unclosed BOUNDARY is accepted closed, and the repair with its byte offset is kept with the revision', async () => {
    // GDSII Stream Format Manual, release 6.0 (XY record): a BOUNDARY's last point repeats its first.
    const { GdsiiWriter } = await import('@/lib/layout/gdsii-writer');
    const { DataType, Rec } = await import('@/lib/layout/gdsii-records');
    const w = new GdsiiWriter().beginCell('TOP');
    w.rect(1, 0, 0, 0, 1000, 1000);
    w.record(Rec.BOUNDARY, DataType.none).int16Record(Rec.LAYER, [1]).int16Record(Rec.DATATYPE, [0]);
    w.int32Record(Rec.XY, [5000, 0, 7000, 0, 7000, 4000, 5000, 4000]).record(Rec.ENDEL, DataType.none);
    const res = await upload(designer, uploadUrl, w.endCell().finish(), 'open-boundary.gds', { name: 'Open boundary' });
    expect(res.status).toBe(201);
    const body = await json<{ revision: { id: string; readWarnings: string[] } }>(res);
    expect(body.revision.readWarnings).toHaveLength(1);
    expect(body.revision.readWarnings[0]).toMatch(/byte \d+/i);
    const list = await json<{ layouts: { name: string; revisions: { readWarnings: string[] }[] }[] }>(await designer.get(uploadUrl));
    expect(list.layouts.find((l) => l.name === 'Open boundary')?.revisions[0]?.readWarnings).toEqual(body.revision.readWarnings);
  });
});

function cookieOf(client: TestClient): string {
  return (client as unknown as { cookies: Map<string, string> }).cookies
    ? [...(client as unknown as { cookies: Map<string, string> }).cookies].map(([k, v]) => `${k}=${v}`).join('; ')
    : '';
}
