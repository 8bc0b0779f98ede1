// Shapes of the review API's answers as the findings components use them (see lib/review/findings-query.ts).
import type { FindingItem, GroupRow } from '@/lib/review/findings-query';
import type { SignoffState } from '@/lib/review/signoff';

export type { FindingItem, GroupRow, SignoffState };
export type Member = { id: string; name: string; handle: string };
export type FindingsResponse = {
  view: 'flat' | 'groups';
  total: number;
  offset: number;
  limit: number;
  items: (FindingItem | GroupRow)[];
  findings?: number;
  located: string | null;
  listed: number;
  counted: number;
  capped: boolean;
  shortKinds: { kind: string; counted: number; listed: number }[];
  kinds: string[];
  layers: string[];
  members: Member[];
  signoff: SignoffState;
  can: { comment: boolean; triage: boolean; waive: boolean; verify: boolean; signoff: boolean };
};

export const isGroup = (x: FindingItem | GroupRow): x is GroupRow => 'count' in x;
