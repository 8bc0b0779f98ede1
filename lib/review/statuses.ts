/**
 * Review statuses of a finding and who may set them. Our own vocabulary:
 *   open         — nobody has settled it yet (also the state of a finding without a review row)
 *   needs_change — the layout must change; goes back to the designer
 *   waived       — accepted as drawn, with a mandatory written reason; the approver's name is recorded
 *   fixed_later  — will be fixed in a later revision (the next analysis should no longer show it)
 *   verified     — a reviewer checked the finding and confirmed it is settled (e.g. the fix in a compare)
 */
import { FINDING_STATUSES, type FindingStatus } from '@/db/schema/reviews';
import type { TeamAction } from '@/lib/auth/permissions';

export { FINDING_STATUSES, type FindingStatus };

export const STATUS_LABEL: Record<FindingStatus, string> = {
  open: 'Open',
  needs_change: 'Needs layout change',
  waived: 'Accepted with waiver',
  fixed_later: 'Fixed in a later revision',
  verified: 'Verified',
};

/** Permission needed to move a finding to each status (lib/auth/permissions.ts). */
export const STATUS_PERMISSION: Record<FindingStatus, TeamAction> = {
  open: 'flag.triage',
  needs_change: 'flag.triage',
  fixed_later: 'flag.triage',
  waived: 'flag.waive',
  verified: 'flag.verify',
};

/** Shortest waiver reason accepted, characters of non-space text (a word or two is not a reason). */
export const MIN_WAIVER_REASON = 10;

/**
 * Whether an error-severity finding in this status still blocks sign-off. Only a waiver (accepted with a reason)
 * or a reviewer's verification settles it; "fixed in a later revision" does not, since this revision still has it.
 */
export function blocksSignoff(status: FindingStatus): boolean {
  return status !== 'waived' && status !== 'verified';
}

/** Checks a requested status change; returns the problem in one sentence, or null when it is acceptable. */
export function statusChangeProblem(to: FindingStatus, reason: string | undefined): string | null {
  if (to === 'waived') {
    const text = (reason ?? '').replace(/\s+/g, ' ').trim();
    if (text.length < MIN_WAIVER_REASON) {
      return `A waiver needs a written reason of at least ${MIN_WAIVER_REASON} characters: say why the finding is acceptable as drawn.`;
    }
  }
  return null;
}
