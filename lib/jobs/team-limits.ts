/**
 * Per-team resource limits: defaults, allowed ranges, reading and writing (team admins only, through
 * `team.manage`). The upload check and the job runner read them; a team without a row has the defaults.
 *
 * Defaults: 10 M flattened polygons / 50 M points per layout (a 1 M-polygon die has room tenfold; a 4999×4999 array
 * of one shape does not), 2 GiB written per analysis, 20 GiB of stored results per team. Ceilings keep an admin
 * from lifting a limit past what one worker can hold (25 M polygons / 100 M points = the flattener's own cap).
 */
import { eq } from 'drizzle-orm';
import { z } from 'zod';
import type { Db } from '@/db/client';
import { projects, teamLimits } from '@/db/schema';
import { ApiError } from '@/lib/http/errors';

export type TeamLimits = { maxPolygons: number; maxPoints: number; maxAnalysisBytes: number; maxStoredBytes: number };

const GiB = 1024 ** 3;
const MiB = 1024 ** 2;

export const DEFAULT_TEAM_LIMITS: TeamLimits = { maxPolygons: 10_000_000, maxPoints: 50_000_000, maxAnalysisBytes: 2 * GiB, maxStoredBytes: 20 * GiB };

const count = (what: string, min: number, max: number) =>
  z.coerce
    .number({ error: `${what} must be a whole number` })
    .int(`${what} must be a whole number`)
    .min(min, `${what} must be at least ${min.toLocaleString('en-US')}`)
    .max(max, `${what} must be at most ${max.toLocaleString('en-US')}`);

/** What an admin may set (bytes as whole MiB in the form, bytes in the API). */
export const teamLimitsInput = z
  .object({
    maxPolygons: count('maxPolygons', 1_000, 25_000_000),
    maxPoints: count('maxPoints', 4_000, 100_000_000),
    maxAnalysisBytes: count('maxAnalysisBytes', 16 * MiB, 64 * GiB),
    maxStoredBytes: count('maxStoredBytes', 16 * MiB, 4096 * GiB),
  })
  .strict()
  .refine((l) => l.maxStoredBytes >= l.maxAnalysisBytes, { message: 'maxStoredBytes must be at least maxAnalysisBytes', path: ['maxStoredBytes'] });

export function getTeamLimits(db: Db, teamId: string): TeamLimits {
  const row = db.select().from(teamLimits).where(eq(teamLimits.teamId, teamId)).get();
  if (!row) return { ...DEFAULT_TEAM_LIMITS };
  return { maxPolygons: row.maxPolygons, maxPoints: row.maxPoints, maxAnalysisBytes: row.maxAnalysisBytes, maxStoredBytes: row.maxStoredBytes };
}

export function teamOfProject(db: Db, projectId: string): string {
  const row = db.select({ teamId: projects.teamId }).from(projects).where(eq(projects.id, projectId)).get();
  if (!row) throw new ApiError('not_found', 'Project not found.');
  return row.teamId;
}

/** Writes the team's limits (caller has checked `team.manage`). Returns what is now in force. */
export function setTeamLimits(db: Db, teamId: string, input: z.infer<typeof teamLimitsInput>, userId: string | null): TeamLimits {
  const values = { ...input, updatedBy: userId, updatedAt: new Date() };
  db.insert(teamLimits).values({ teamId, ...values }).onConflictDoUpdate({ target: teamLimits.teamId, set: values }).run();
  return getTeamLimits(db, teamId);
}

/** Bytes of stored results of the team's analyses (maps + per-opening files), from the database's index. */
export function teamStoredResultBytes(db: Db, teamId: string): number {
  const sum = (table: string) =>
    (
      db.$client
        .prepare(`SELECT COALESCE(SUM(f.bytes), 0) AS n FROM ${table} f JOIN analyses a ON a.id = f.analysis_id JOIN projects p ON p.id = a.project_id WHERE p.team_id = ?`)
        .get(teamId) as { n: number }
    ).n;
  return sum('analysis_maps') + sum('analysis_feature_files');
}
