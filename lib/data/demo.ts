import { count } from 'drizzle-orm';
import type { Db } from '@/db/client';
import { auditLog, memberships, projects, teams, users } from '@/db/schema';
import type { TeamRole } from '@/lib/auth/permissions';
import { hashPassword } from '@/lib/auth/password';

// The invented demo scenario: a small MEMS and advanced-packaging team with one person per role.

/** Password of every demo account unless TRENCHANT_DEMO_PASSWORD sets another. */
export const DEMO_PASSWORD_DEFAULT = 'etch-demo-2026';

export function demoPassword(): string {
  return process.env.TRENCHANT_DEMO_PASSWORD || DEMO_PASSWORD_DEFAULT;
}

export const DEMO_TEAM = { id: 'demo-team-larkspur', name: 'Larkspur Microsystems' } as const;

export const DEMO_USERS = [
  { id: 'demo-admin', role: 'admin', name: 'Mira Castellan', email: 'admin@larkspur.example' },
  { id: 'demo-process', role: 'process_engineer', name: 'Tobias Ngata', email: 'process@larkspur.example' },
  { id: 'demo-designer', role: 'designer', name: 'Suvi Laaksonen', email: 'designer@larkspur.example' },
  { id: 'demo-reviewer', role: 'reviewer', name: 'Rafael Odum', email: 'reviewer@larkspur.example' },
] as const satisfies readonly { id: string; role: TeamRole; name: string; email: string }[];

export const DEMO_PROJECTS = [
  {
    id: 'demo-kestrel',
    name: 'Kestrel-3 gyroscope die',
    description: 'Vibratory MEMS gyroscope: deep silicon trench release of comb drives and springs next to open bond-pad fields.',
  },
  {
    id: 'demo-viaduct',
    name: 'Viaduct TSV test chip',
    description: 'Through-silicon-via daisy chains with 5 to 50 µm via diameters at several pitches, to map depth loading.',
  },
] as const;

/** True when the database has no account at all. */
export function isEmptyInstance(db: Db): boolean {
  return (db.select({ n: count() }).from(users).get()?.n ?? 0) === 0;
}

/** Inserts the demo team, its four members and projects in one transaction. Call only on an empty instance. */
export async function seedDemo(db: Db): Promise<void> {
  const passwordHash = await hashPassword(demoPassword());
  const base = Date.now();
  db.transaction((tx) => {
    tx.insert(teams).values({ id: DEMO_TEAM.id, name: DEMO_TEAM.name, createdAt: new Date(base) }).run();
    DEMO_USERS.forEach((u, i) => {
      const at = new Date(base + i);
      tx.insert(users).values({ id: u.id, email: u.email, name: u.name, passwordHash, createdAt: at }).run();
      tx.insert(memberships).values({ teamId: DEMO_TEAM.id, userId: u.id, role: u.role, createdAt: at }).run();
    });
    DEMO_PROJECTS.forEach((p, i) => {
      tx.insert(projects)
        .values({ ...p, teamId: DEMO_TEAM.id, createdBy: 'demo-designer', createdAt: new Date(base + 10 + i) })
        .run();
    });
    tx.insert(auditLog).values({ at: new Date(base), actorId: null, teamId: DEMO_TEAM.id, action: 'demo.seed', detail: null }).run();
  });
}

/** Console lines listing the demo sign-ins. */
export function demoSignInLines(): string[] {
  const width = Math.max(...DEMO_USERS.map((u) => u.email.length));
  return [
    `Demo team "${DEMO_TEAM.name}" — sign in with any of these (password: ${demoPassword()}):`,
    ...DEMO_USERS.map((u) => `  ${u.email.padEnd(width)}  ${u.role.replace('_', ' ')}  (${u.name})`),
  ];
}
