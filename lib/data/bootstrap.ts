import { eq } from 'drizzle-orm';
import { getDb } from '@/db/client';
import { teams } from '@/db/schema';
import { startFakeSmtp } from '@/lib/mail/fake-smtp';
import { DEMO_TEAM, demoSignInLines, isEmptyInstance, seedDemo } from './demo';

// Not marked 'server-only': instrumentation.ts, scripts and tests call it outside the React server build.

export type BootstrapResult = { seeded: boolean; demoPresent: boolean; fakeSmtpPort: number | null };

/**
 * Server start-up: opens the database (applying migrations), seeds the demo scenario when the database has no
 * account yet (unless TRENCHANT_DEMO=0), starts the development SMTP server unless SMTP_URL is set, and prints
 * the demo sign-ins. Safe to call more than once.
 */
export async function bootstrap(log: (line: string) => void = (l) => console.log(l)): Promise<BootstrapResult> {
  const db = getDb();
  let seeded = false;
  if (process.env.TRENCHANT_DEMO !== '0' && isEmptyInstance(db)) {
    await seedDemo(db);
    seeded = true;
  }
  const demoPresent = db.select({ id: teams.id }).from(teams).where(eq(teams.id, DEMO_TEAM.id)).get() !== undefined;
  let fakeSmtpPort: number | null = null;
  if (!process.env.SMTP_URL) {
    fakeSmtpPort = (await startFakeSmtp()).port;
    log(`[trenchant] development mail catcher on 127.0.0.1:${fakeSmtpPort}; admins read it under Team → Outbox`);
  }
  if (seeded) log('[trenchant] empty database: seeded the demo scenario');
  if (demoPresent) for (const line of demoSignInLines()) log(`[trenchant] ${line}`);
  return { seeded, demoPresent, fakeSmtpPort };
}
