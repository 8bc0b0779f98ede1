/**
 * Review logic against an in-memory database with findings from the real pipeline (tests/review/review-db.ts):
 * waiver rules, permissions, assignment, comments with mentions, notifications with opt-out, sign-off rules, the
 * findings query, and the CSV export round-tripping through csv-parse (a general-purpose reference parser).
 */
import { parse } from 'csv-parse/sync';
import { eq } from 'drizzle-orm';
import { beforeAll, describe, expect, it } from 'vitest';
import type { Db } from '@/db/client';
import { auditLog, notificationPrefs, notifications } from '@/db/schema';
import { CSV_COLUMNS, findingsCsv } from '@/lib/review/csv';
import { findingsQuery, queryFindings } from '@/lib/review/findings-query';
import { loadFindings } from '@/lib/review/findings-store';
import { addComment, changeFindings, findingThread } from '@/lib/review/review-actions';
import { signOff, signoffState } from '@/lib/review/signoff';
import { listNotifications } from '@/lib/review/notifications';
import { DEMO_PROJECTS } from '@/lib/data/demo';
import { narrow, reviewDb, storeAnalysis, TEAM_ID } from './review-db';

const reviewer = { id: 'demo-reviewer', name: 'Rafael Odum', role: 'reviewer' as const };
const designer = { id: 'demo-designer', name: 'Suvi Laaksonen', role: 'designer' as const };
const link = '/analyses/x';

describe('review of one analysis', () => {
  let db: Db;
  let id: string;
  let keys: string[];
  beforeAll(async () => {
    db = await reviewDb();
    // four 2 µm trenches (below the 3 µm rule) and one 2.5 µm trench: two width classes
    id = await storeAnalysis(db, [narrow(100), narrow(200), narrow(300), narrow(400), [600, 300, 602.5, 700]], 1);
    keys = loadFindings(db, id).items.map((f) => f.key);
  });

  it('sorts by measured width on the server (2.5 µm last ascending, first descending)', () => {
    const items = loadFindings(db, id).items;
    const asc = queryFindings(items, findingsQuery.parse({ view: 'flat', sort: 'measured' })).items as { measured: number }[];
    const desc = queryFindings(items, findingsQuery.parse({ view: 'flat', sort: 'measured', dir: 'desc' })).items as { measured: number }[];
    expect(asc.map((f) => f.measured)).toEqual([2, 2, 2, 2, 2.5]);
    expect(desc[0]?.measured).toBe(2.5);
  });

  it('lists five error findings in two groups (2 µm ×4, 2.5 µm ×1)', () => {
    const page = queryFindings(loadFindings(db, id).items, findingsQuery.parse({}));
    expect(page.view).toBe('groups');
    expect(page.items.map((g) => ('count' in g ? g.count : 0)).sort()).toEqual([1, 4]);
  });

  it('refuses a waiver without a written reason (422) and keeps the finding open', () => {
    expect(() => changeFindings(db, { analysisId: id, teamId: TEAM_ID, actor: reviewer, keys: [keys[0] as string], status: 'waived', reason: '  ', link })).toThrow(/written reason/);
    expect(loadFindings(db, id).items[0]?.status).toBe('open');
  });

  it('refuses a waiver from a designer (role check in the logic, not only the UI)', () => {
    expect(() => changeFindings(db, { analysisId: id, teamId: TEAM_ID, actor: designer, keys: [keys[0] as string], status: 'waived', reason: 'Looks fine to me, really.', link })).toThrow(/reviewer/);
  });

  it('assigns to a team member and notifies them, but refuses outsiders', () => {
    const r = changeFindings(db, { analysisId: id, teamId: TEAM_ID, actor: reviewer, keys: keys.slice(0, 2), assigneeId: 'demo-designer', link });
    expect(r.changed).toBe(2);
    expect(r.mails.map((m) => m.to)).toEqual(['designer@larkspur.example']);
    // the mail says which project and layout revision, right under its title
    expect(r.mails[0]?.text.split('\n').slice(0, 2)).toEqual([expect.stringMatching(/assigned 2 findings to you$/), `${DEMO_PROJECTS[0].name} · Synthetic trenches r1`]);
    const n = db.select().from(notifications).where(eq(notifications.userId, 'demo-designer')).all();
    expect(n.map((x) => x.kind)).toEqual(['assignment']);
    // the in-app list names the project and layout revision the finding is in
    expect(listNotifications(db, 'demo-designer').items[0]?.context).toBe(`${DEMO_PROJECTS[0].name} · Synthetic trenches r1`);
    expect(() => changeFindings(db, { analysisId: id, teamId: TEAM_ID, actor: reviewer, keys: keys.slice(0, 1), assigneeId: 'nobody', link })).toThrow(/member/);
  });

  it('stores comments as plain text and notifies mentioned members only', () => {
    const f = loadFindings(db, id).items[0];
    const body = '<script>alert("x")</script> @designer please widen this';
    const r = addComment(db, { analysisId: id, teamId: TEAM_ID, findingId: f?.id as string, actor: reviewer, body, link });
    expect(r.mentions).toEqual(['demo-designer']);
    expect(r.mails.map((m) => m.to)).toEqual(['designer@larkspur.example']);
    const thread = findingThread(db, id, f?.id as string);
    expect(thread.events.at(-1)).toMatchObject({ type: 'comment', body, actorName: 'Rafael Odum' });
  });

  it('records status changes with who and when, notifies the people involved, and honours e-mail opt-out', () => {
    db.insert(notificationPrefs).values({ userId: 'demo-designer', emailAssignment: true, emailMention: true, emailStatus: false, updatedAt: new Date() }).run();
    const r = changeFindings(db, { analysisId: id, teamId: TEAM_ID, actor: reviewer, keys: [keys[0] as string], status: 'needs_change', link });
    expect(r.mails).toEqual([]); // the designer (assignee, analysis owner) opted out of status e-mails
    const inApp = db.select().from(notifications).where(eq(notifications.userId, 'demo-designer')).all();
    expect(inApp.filter((x) => x.kind === 'status').length).toBe(1);
    const f = loadFindings(db, id).items[0];
    const last = findingThread(db, id, f?.id as string).events.at(-1);
    expect(last).toMatchObject({ type: 'status', fromStatus: 'open', toStatus: 'needs_change', actorName: 'Rafael Odum' });
    expect(db.select().from(auditLog).where(eq(auditLog.action, 'flag.triage')).all().length).toBeGreaterThan(0);
  });

  it('blocks sign-off while an error is open or not waived, then records who, when and the model version', () => {
    expect(signoffState(db, id)).toMatchObject({ canSignOff: false, blocking: 5 });
    changeFindings(db, { analysisId: id, teamId: TEAM_ID, actor: reviewer, keys: keys.slice(0, 4), status: 'waived', reason: 'Dummy fill trenches; depth is not functional.', link });
    expect(signoffState(db, id)).toMatchObject({ canSignOff: false, blocking: 1 });
    expect(() => signOff(db, { analysisId: id, teamId: TEAM_ID, actor: reviewer, note: '' })).toThrow(/Cannot sign off/);
    changeFindings(db, { analysisId: id, teamId: TEAM_ID, actor: reviewer, keys: keys.slice(4), status: 'verified', link });
    const s = signOff(db, { analysisId: id, teamId: TEAM_ID, actor: reviewer, note: 'ok' });
    expect(s).toMatchObject({ signedByName: 'Rafael Odum', modelName: 'pipeline test model', modelVersion: 't1', counts: { total: 5, waived: 4, verified: 1 } });
  });

  it('freezes the review after sign-off', () => {
    expect(() => changeFindings(db, { analysisId: id, teamId: TEAM_ID, actor: reviewer, keys: [keys[0] as string], status: 'open', link })).toThrow(/new analysis/);
    expect(() => signOff(db, { analysisId: id, teamId: TEAM_ID, actor: reviewer, note: '' })).toThrow(/Already signed off/);
  });

  it('exports CSV that csv-parse reads back to the same findings, quotes, commas and newlines included', () => {
    const items = loadFindings(db, id).items;
    const csv = findingsCsv(items, { analysisId: id, model: 'pipeline test model t1, "quoted"' });
    const rows = parse(csv, { columns: true }) as Record<string, string>[];
    expect(Object.keys(rows[0] ?? {})).toEqual([...CSV_COLUMNS]);
    expect(rows.length).toBe(items.length);
    rows.forEach((r, i) => {
      const f = items[i];
      expect(r.flag_key).toBe(f?.key);
      expect(Number(r.x_um)).toBe(f?.atUm[0]);
      expect(Number(r.measured)).toBe(f?.measured);
      expect(r.message).toBe(f?.message);
      expect(r.waiver_reason).toBe(f?.waiver?.reason ?? '');
      expect(r.model).toBe('pipeline test model t1, "quoted"');
    });
  });
});

describe('findingsCsv guards against spreadsheet formulas', () => {
  it('prefixes text starting with =, +, - or @ with an apostrophe and leaves numbers alone', async () => {
    const db = await reviewDb();
    const id = await storeAnalysis(db, [narrow(100)], 1);
    const key = loadFindings(db, id).items[0]?.key as string;
    changeFindings(db, { analysisId: id, teamId: TEAM_ID, actor: reviewer, keys: [key], status: 'waived', reason: '=HYPERLINK("http://x.example","ok") is fine', link });
    const rows = parse(findingsCsv(loadFindings(db, id).items, { analysisId: id, model: '@model' }), { columns: true }) as Record<string, string>[];
    expect(rows[0]?.waiver_reason).toBe('\'=HYPERLINK("http://x.example","ok") is fine');
    expect(rows[0]?.model).toBe("'@model");
    expect(Number(rows[0]?.x_um)).toBeCloseTo(101, 9);
  });
});

describe('queryFindings(items, query)', () => {
  let db: Db;
  let id: string;
  beforeAll(async () => {
    db = await reviewDb();
    id = await storeAnalysis(db, [narrow(100), narrow(200), narrow(300)], 1);
  });
  it('filters by status and text, pages and sorts on the server', () => {
    const items = loadFindings(db, id).items;
    const flat = queryFindings(items, findingsQuery.parse({ view: 'flat', limit: '2' }));
    expect(flat).toMatchObject({ total: 3, items: { length: 2 } });
    expect(queryFindings(items, findingsQuery.parse({ view: 'flat', status: 'waived' })).total).toBe(0);
    expect(queryFindings(items, findingsQuery.parse({ view: 'flat', q: 'NARROWER' })).total).toBe(3);
    expect(queryFindings(items, findingsQuery.parse({ view: 'flat', q: 'no such text' })).total).toBe(0);
    expect(queryFindings(items, findingsQuery.parse({ view: 'flat', layer: '5/0' })).total).toBe(3);
    expect(queryFindings(items, findingsQuery.parse({ view: 'flat', layer: '6/0' })).total).toBe(0);
    const byRankDesc = queryFindings(items, findingsQuery.parse({ view: 'flat', dir: 'desc' }));
    expect(byRankDesc.items.map((f) => ('rank' in f ? f.rank : -1))).toEqual([2, 1, 0]);
  });
  it('lists the members of one group on demand', () => {
    const items = loadFindings(db, id).items;
    const groups = queryFindings(items, findingsQuery.parse({}));
    const g = groups.items[0];
    expect(g && 'count' in g ? g.count : 0).toBe(3);
    const members = queryFindings(items, findingsQuery.parse({ group: g?.id }));
    expect(members.view).toBe('flat');
    expect(members.total).toBe(3);
  });
});

describe('queryFindings locate (a canvas selection finds its row)', () => {
  it('returns the page holding the finding and the row to highlight, in both views', async () => {
    const db = await reviewDb();
    const xs = Array.from({ length: 12 }, (_, i) => 100 + i * 40);
    const id = await storeAnalysis(db, xs.map(narrow), 1);
    const items = loadFindings(db, id).items;
    const target = items[9]?.key as string;
    const flat = queryFindings(items, findingsQuery.parse({ view: 'flat', limit: '5', locate: target }));
    expect(flat).toMatchObject({ offset: 5, located: target });
    expect(flat.items.map((f) => ('key' in f ? f.key : ''))).toContain(target);
    const grouped = queryFindings(items, findingsQuery.parse({ locate: target }));
    expect(grouped.located).toBe(grouped.items[0]?.id);
    expect(queryFindings(items, findingsQuery.parse({ view: 'flat', locate: 'no-such-key' })).located).toBeNull();
  });
});
