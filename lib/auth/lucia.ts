import { DrizzleSQLiteAdapter } from '@lucia-auth/adapter-drizzle';
import { Lucia, TimeSpan } from 'lucia';
import { getDb } from '@/db/client';
import { sessions, users } from '@/db/schema';
import { HashedSessionAdapter } from './hashed-session-adapter';

/** Name of the session cookie (httpOnly, SameSite=Lax). */
export const SESSION_COOKIE = 'trenchant_session';

function createLucia() {
  // Session ids are stored as SHA-256 hashes (see HashedSessionAdapter); the cookie carries the plain id.
  return new Lucia(new HashedSessionAdapter(new DrizzleSQLiteAdapter(getDb(), sessions, users)), {
    sessionExpiresIn: new TimeSpan(30, 'd'),
    sessionCookie: {
      name: SESSION_COOKIE,
      // Sliding 30-day session; the cookie carries the same expiry.
      expires: true,
      attributes: {
        sameSite: 'lax',
        // The demo serves plain http on localhost; behind TLS set TRENCHANT_SECURE_COOKIES=1.
        secure: process.env.TRENCHANT_SECURE_COOKIES === '1',
      },
    },
    getUserAttributes: (attributes) => ({ email: attributes.email, name: attributes.name }),
  });
}

declare module 'lucia' {
  interface Register {
    Lucia: ReturnType<typeof createLucia>;
    DatabaseUserAttributes: { email: string; name: string };
  }
}

const holder = globalThis as typeof globalThis & { __trenchantLucia?: ReturnType<typeof createLucia> };

/** The process-wide lucia instance over getDb(). */
export function getLucia(): ReturnType<typeof createLucia> {
  holder.__trenchantLucia ??= createLucia();
  return holder.__trenchantLucia;
}
