import { ROLE_LABEL, type TeamRole } from '@/lib/auth/permissions';

const TONE: Record<TeamRole, string> = {
  admin: 'bg-ink-900 text-wafer-50',
  process_engineer: 'bg-oxide-500/12 text-oxide-600 ring-1 ring-oxide-500/30',
  designer: 'bg-copper-400/15 text-copper-700 ring-1 ring-copper-500/30',
  reviewer: 'bg-wafer-200 text-ink-700 ring-1 ring-wafer-300',
};

export function RoleBadge({ role }: { role: TeamRole }) {
  return (
    <span className={`inline-flex items-center rounded px-1.5 py-0.5 text-[11px] font-medium ${TONE[role]}`}>{ROLE_LABEL[role]}</span>
  );
}
