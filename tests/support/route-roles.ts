/**
 * Route × role authorisation checks shared by the server tests (pipeline and review routes): every team role is
 * allowed exactly what lib/auth/permissions.ts says, and refused (403) the rest.
 */
import { expect, it } from 'vitest';
import { can, TEAM_ROLES, type TeamAction, type TeamRole } from '@/lib/auth/permissions';
import type { TestClient } from './http';

/** One route to try: `okStatus` is what an allowed role gets; 'project.read' is every member's. */
export type RouteCase<Body = unknown> = { name: string; method: 'GET' | 'POST' | 'PUT'; path: () => string; action: TeamAction | 'project.read'; body?: () => Body; okStatus: number[] };

/** One test per role: each route answers an allowed status, or 403 where the table refuses the role. */
export function itAllowsWhatThePermissionTableSays<R extends RouteCase<unknown>>(routes: R[], clients: Record<TeamRole, TestClient>, call: (client: TestClient, r: R) => Promise<Response>): void {
  for (const role of TEAM_ROLES) {
    it(`${role}: allowed exactly what the permission table says`, async () => {
      for (const r of routes) {
        const res = await call(clients[role], r);
        const allowed = r.action === 'project.read' || can(role, r.action);
        if (allowed) expect(r.okStatus, `${role} ${r.name}`).toContain(res.status);
        else expect(res.status, `${role} ${r.name}`).toBe(403);
      }
    });
  }
}
