/**
 * Saved rule sets as data: list, create, update (rename, edit rules, make default, archive). Callers check roles
 * first (reading: team members; writing: 'model.publish').
 */
import { randomUUID } from 'node:crypto';
import { and, asc, eq, ne } from 'drizzle-orm';
import type { Db } from '@/db/client';
import { ruleSets, type RuleSetRow } from '@/db/schema';
import { ApiError } from '@/lib/http/errors';
import { ruleSetRulesSchema, type RuleSetBody, type RuleSetRules, type ruleSetPatchBody } from './rule-set-schema';
import type { z } from 'zod';

export type RuleSetView = { id: string; teamId: string; name: string; description: string; rules: RuleSetRules; isDefault: boolean; archived: boolean; updatedAt: string };

function view(r: RuleSetRow): RuleSetView {
  const rules = ruleSetRulesSchema.safeParse(r.rules);
  if (!rules.success) throw new ApiError('internal', `Stored rule set "${r.name}" does not validate.`);
  return { id: r.id, teamId: r.teamId, name: r.name, description: r.description, rules: rules.data, isDefault: r.isDefault, archived: r.archived, updatedAt: r.updatedAt.toISOString() };
}

/** Rules validated, with field errors keyed `rules.<path>`. */
export function validateRules(input: unknown): RuleSetRules {
  const r = ruleSetRulesSchema.safeParse(input);
  if (r.success) return r.data;
  const fieldErrors: Record<string, string[]> = {};
  for (const i of r.error.issues) {
    const key = ['rules', ...i.path.map(String)].join('.');
    const keys = i.code === 'unrecognized_keys' ? i.keys.map((k) => `${key}.${k}`) : [key];
    for (const k of keys) (fieldErrors[k] ??= []).push(i.code === 'unrecognized_keys' ? 'unknown field' : i.message);
  }
  const first = r.error.issues[0];
  throw new ApiError('bad_request', `Some rules are not valid: ${first ? `${first.path.join('.') || 'rules'}: ${first.message}` : ''}.`, { fieldErrors });
}

export function listRuleSets(db: Db, teamId: string, opts: { includeArchived?: boolean } = {}): RuleSetView[] {
  return db
    .select()
    .from(ruleSets)
    .where(opts.includeArchived ? eq(ruleSets.teamId, teamId) : and(eq(ruleSets.teamId, teamId), eq(ruleSets.archived, false)))
    .orderBy(asc(ruleSets.name))
    .all()
    .map(view);
}

export function ruleSetTeamId(db: Db, id: string): string {
  const row = db.select({ teamId: ruleSets.teamId }).from(ruleSets).where(eq(ruleSets.id, id)).get();
  if (!row) throw new ApiError('not_found', 'Rule set not found.');
  return row.teamId;
}

export function getRuleSet(db: Db, id: string): RuleSetView {
  const row = db.select().from(ruleSets).where(eq(ruleSets.id, id)).get();
  if (!row) throw new ApiError('not_found', 'Rule set not found.');
  return view(row);
}

function assertNameFree(db: Db, teamId: string, name: string, exceptId?: string): void {
  const clash = db
    .select({ id: ruleSets.id })
    .from(ruleSets)
    .where(and(eq(ruleSets.teamId, teamId), eq(ruleSets.name, name), ...(exceptId ? [ne(ruleSets.id, exceptId)] : [])))
    .get();
  if (clash) throw new ApiError('conflict', `The team already has a rule set named "${name}".`, { fieldErrors: { name: ['already used in this team'] } });
}

export function createRuleSet(db: Db, input: { teamId: string; userId: string | null; body: RuleSetBody; now?: Date }): RuleSetView {
  const rules = validateRules(input.body.rules);
  assertNameFree(db, input.teamId, input.body.name);
  const now = input.now ?? new Date();
  const id = randomUUID();
  db.transaction((tx) => {
    if (input.body.isDefault) tx.update(ruleSets).set({ isDefault: false }).where(eq(ruleSets.teamId, input.teamId)).run();
    tx.insert(ruleSets)
      .values({ id, teamId: input.teamId, name: input.body.name, description: input.body.description, rules: rules as unknown as Record<string, unknown>, isDefault: input.body.isDefault, archived: false, createdBy: input.userId, createdAt: now, updatedBy: input.userId, updatedAt: now })
      .run();
  });
  return getRuleSet(db, id);
}

export function updateRuleSet(db: Db, input: { id: string; userId: string | null; body: z.infer<typeof ruleSetPatchBody>; now?: Date }): RuleSetView {
  const current = getRuleSet(db, input.id);
  const b = input.body;
  if (b.name !== undefined) assertNameFree(db, current.teamId, b.name, current.id);
  const rules = b.rules !== undefined ? validateRules(b.rules) : undefined;
  const now = input.now ?? new Date();
  db.transaction((tx) => {
    if (b.isDefault) tx.update(ruleSets).set({ isDefault: false }).where(eq(ruleSets.teamId, current.teamId)).run();
    tx.update(ruleSets)
      .set({
        ...(b.name !== undefined ? { name: b.name } : {}),
        ...(b.description !== undefined ? { description: b.description } : {}),
        ...(rules ? { rules: rules as unknown as Record<string, unknown> } : {}),
        ...(b.isDefault !== undefined ? { isDefault: b.isDefault } : {}),
        ...(b.archived !== undefined ? { archived: b.archived, ...(b.archived ? { isDefault: false } : {}) } : {}),
        updatedBy: input.userId,
        updatedAt: now,
      })
      .where(eq(ruleSets.id, current.id))
      .run();
  });
  return getRuleSet(db, current.id);
}

/** The rule set an analysis asks for; must be in the team and not archived. */
export function ruleSetForAnalysis(db: Db, teamId: string, id: string): RuleSetView {
  const row = db.select().from(ruleSets).where(and(eq(ruleSets.id, id), eq(ruleSets.teamId, teamId))).get();
  if (!row) throw new ApiError('unprocessable', 'Unknown rule set.', { fieldErrors: { ruleSetId: ['no such rule set in this team'] } });
  if (row.archived) throw new ApiError('unprocessable', `The rule set "${row.name}" is archived.`, { fieldErrors: { ruleSetId: ['archived'] } });
  return view(row);
}
