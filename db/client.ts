import Database from 'better-sqlite3';
import { drizzle, type BetterSQLite3Database } from 'drizzle-orm/better-sqlite3';
import { migrate } from 'drizzle-orm/better-sqlite3/migrator';
import { mkdirSync } from 'node:fs';
import path from 'node:path';
import * as schema from './schema';

export type Db = BetterSQLite3Database<typeof schema> & { $client: Database.Database };

/** Where the SQLite file lives: TRENCHANT_DB, default ./data/trenchant.db (relative to the working directory). */
export function databasePath(): string {
  return process.env.TRENCHANT_DB ?? path.join(process.cwd(), 'data', 'trenchant.db');
}

/** Folder of drizzle-kit migrations; `next start` and the tests run with the project root as cwd. */
export function migrationsFolder(): string {
  return process.env.TRENCHANT_MIGRATIONS ?? path.join(process.cwd(), 'drizzle');
}

/**
 * Opens (creating if needed) a SQLite database with WAL journaling and foreign keys on, and applies pending
 * migrations. `file` may be ':memory:' for tests.
 */
export function openDatabase(file: string): Db {
  if (file !== ':memory:') mkdirSync(path.dirname(path.resolve(file)), { recursive: true });
  const sqlite = new Database(file);
  sqlite.pragma('journal_mode = WAL');
  sqlite.pragma('foreign_keys = ON');
  sqlite.pragma('busy_timeout = 5000');
  const db = drizzle(sqlite, { schema });
  migrate(db, { migrationsFolder: migrationsFolder() });
  return db;
}

// One connection per server process. Kept on globalThis because Next may load this module in more than one
// bundle (instrumentation, route handlers, pages) within the same process.
const holder = globalThis as typeof globalThis & { __trenchantDb?: Db };

/** The process-wide database at databasePath(), opened and migrated on first use. */
export function getDb(): Db {
  holder.__trenchantDb ??= openDatabase(databasePath());
  return holder.__trenchantDb;
}

/** Tests: route getDb() to a given database (e.g. an in-memory one). */
export function setDbForTesting(db: Db | undefined): void {
  holder.__trenchantDb = db;
}
