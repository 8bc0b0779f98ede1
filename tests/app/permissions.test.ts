import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { openDatabase, setDbForTesting } from '@/db/client';
import { memberships, teams, users } from '@/db/schema';
import { requireTeamPermission } from '@/lib/auth/guard';
import { can, PERMISSIONS, TEAM_ACTIONS, TEAM_ROLES, type TeamAction, type TeamRole } from '@/lib/auth/permissions';
import { DEMO_TEAM, DEMO_USERS, seedDemo } from '@/lib/data/demo';
import { ApiError } from '@/lib/http/errors';

// The role split is the product owner's specification (issue 2): admin = members and settings; process engineer =
// process models and rules; designer = layouts and analyses; reviewer = comments, waivers, sign-off. The expected
// table below is written out by hand from that text, independently of lib/auth/permissions.ts.
const EXPECTED: Record<TeamAction, TeamRole[]> = {
  'team.manage': ['admin'],
  'members.invite': ['admin'],
  'outbox.view': ['admin'],
  'project.create': ['admin', 'designer'],
  'layout.upload': ['admin', 'designer'],
  'analysis.create': ['admin', 'process_engineer', 'designer'],
  'model.publish': ['admin', 'process_engineer'],
  'flag.comment': ['admin', 'process_engineer', 'designer', 'reviewer'],
  'flag.waive': ['admin', 'reviewer'],
  'flag.triage': ['admin', 'process_engineer', 'designer', 'reviewer'],
  'flag.verify': ['admin', 'reviewer'],
  'audit.view': ['admin'],
  'revision.signoff': ['admin', 'reviewer'],
};

describe('PERMISSIONS', () => {
  it('lists exactly the specified actions', () => {
    expect([...TEAM_ACTIONS].sort()).toEqual(Object.keys(EXPECTED).sort());
  });
  for (const action of Object.keys(EXPECTED) as TeamAction[]) {
    it(`can(role, '${action}') matches the specification for every role`, () => {
      for (const role of TEAM_ROLES) expect(can(role, action), `${role} × ${action}`).toBe(EXPECTED[action].includes(role));
    });
  }
  it('only mentions known roles', () => {
    for (const roles of Object.values(PERMISSIONS)) for (const r of roles) expect(TEAM_ROLES).toContain(r);
  });
});

describe('requireTeamPermission(teamId, action, user) against a seeded in-memory database', () => {
  beforeAll(async () => {
    const db = openDatabase(':memory:');
    setDbForTesting(db);
    await seedDemo(db);
    const now = new Date();
    db.insert(teams).values({ id: 'other-team', name: 'Other', createdAt: now }).run();
    db.insert(users).values({ id: 'outsider', email: 'out@example.com', name: 'Outsider', passwordHash: 'x', createdAt: now }).run();
    db.insert(memberships).values({ teamId: 'other-team', userId: 'outsider', role: 'admin', createdAt: now }).run();
  });
  afterAll(() => setDbForTesting(undefined));

  for (const u of DEMO_USERS) {
    for (const action of TEAM_ACTIONS) {
      const allowed = EXPECTED[action].includes(u.role);
      it(`${u.role} × ${action} → ${allowed ? 'allowed' : '403'}`, async () => {
        const user = { id: u.id, email: u.email, name: u.name };
        const attempt = requireTeamPermission(DEMO_TEAM.id, action, user);
        if (allowed) await expect(attempt).resolves.toMatchObject({ role: u.role, teamId: DEMO_TEAM.id });
        else await expect(attempt).rejects.toMatchObject({ status: 403, code: 'forbidden' });
      });
    }
  }

  it('refuses an admin of another team with 403 for every action', async () => {
    const user = { id: 'outsider', email: 'out@example.com', name: 'Outsider' };
    for (const action of TEAM_ACTIONS) {
      const error = await requireTeamPermission(DEMO_TEAM.id, action, user).catch((e: unknown) => e);
      expect(error).toBeInstanceOf(ApiError);
      expect((error as ApiError).status).toBe(403);
    }
  });
});
