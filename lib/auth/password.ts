import { hash, verify } from '@node-rs/argon2';

// argon2id with the OWASP minimum profile (19 MiB, 2 passes, 1 lane). @node-rs/argon2 defaults to argon2id.
const OPTIONS = { memoryCost: 19456, timeCost: 2, outputLen: 32, parallelism: 1 } as const;

/** argon2id PHC string for `password`. */
export function hashPassword(password: string): Promise<string> {
  return hash(password, OPTIONS);
}

/** True when `password` matches the PHC string; false (never throws) for a malformed hash. */
export async function verifyPassword(passwordHash: string, password: string): Promise<boolean> {
  try {
    return await verify(passwordHash, password);
  } catch {
    return false;
  }
}
