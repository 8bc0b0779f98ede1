import { TEAM_ROLES, type TeamRole } from '@/db/schema/teams';

export { TEAM_ROLES, type TeamRole };

/**
 * The permission table: every protected action and the team roles allowed to do it. This is the only place
 * roles are mapped to actions; pages hide buttons with `can()`, and every handler and server action enforces
 * the same table through `requireTeamPermission` (lib/auth/guard.ts).
 */
export const PERMISSIONS = {
  /** rename the team, change member roles, remove members */
  'team.manage': ['admin'],
  /** send e-mail invitations */
  'members.invite': ['admin'],
  /** read the development mail outbox */
  'outbox.view': ['admin'],
  /** create a project */
  'project.create': ['admin', 'designer'],
  /** upload a layout revision */
  'layout.upload': ['admin', 'designer'],
  /** start an analysis of a layout */
  'analysis.create': ['admin', 'designer', 'process_engineer'],
  /** create, calibrate and publish process models and check rules */
  'model.publish': ['admin', 'process_engineer'],
  /** comment on a flagged risk */
  'flag.comment': ['admin', 'process_engineer', 'designer', 'reviewer'],
  /** waive a flagged risk (with a reason) */
  'flag.waive': ['admin', 'reviewer'],
  /** sign off a layout revision */
  'revision.signoff': ['admin', 'reviewer'],
  /** assign a finding, mark it open / needs layout change / fixed in a later revision */
  'flag.triage': ['admin', 'process_engineer', 'designer', 'reviewer'],
  /** mark a finding verified */
  'flag.verify': ['admin', 'reviewer'],
  /** read the team's audit log */
  'audit.view': ['admin'],
} as const satisfies Record<string, readonly TeamRole[]>;

export type TeamAction = keyof typeof PERMISSIONS;
export const TEAM_ACTIONS = Object.keys(PERMISSIONS) as TeamAction[];

/** Whether `role` may perform `action`. Pure; no session involved. */
export function can(role: TeamRole, action: TeamAction): boolean {
  return (PERMISSIONS[action] as readonly TeamRole[]).includes(role);
}

/** What each action means, in the words the permission table on the team page shows (never the raw key). */
export const PERMISSION_LABEL: Record<TeamAction, string> = {
  'team.manage': 'Manage the team and its members',
  'members.invite': 'Invite people',
  'outbox.view': 'Read the development mail outbox',
  'project.create': 'Create projects',
  'layout.upload': 'Upload layout revisions',
  'analysis.create': 'Start analyses',
  'model.publish': 'Calibrate and publish process models',
  'flag.comment': 'Comment on findings',
  'flag.waive': 'Waive findings (with a reason)',
  'revision.signoff': 'Sign off an analysis',
  'flag.triage': 'Assign findings and set their status',
  'flag.verify': 'Mark findings verified',
  'audit.view': 'Read the audit log',
};

/** Human labels used in the UI. */
export const ROLE_LABEL: Record<TeamRole, string> = {
  admin: 'Admin',
  process_engineer: 'Process engineer',
  designer: 'Designer',
  reviewer: 'Reviewer',
};

/** Roles that may perform `action`, as labels, for "needs the X or Y role" messages. */
export function rolesAllowedText(action: TeamAction): string {
  const labels = (PERMISSIONS[action] as readonly TeamRole[]).map((r) => ROLE_LABEL[r].toLowerCase());
  return labels.length <= 1 ? (labels[0] ?? '') : `${labels.slice(0, -1).join(', ')} or ${labels.at(-1)}`;
}
