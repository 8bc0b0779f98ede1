import Link from 'next/link';
import { Card } from '@/components/ui/card';
import { getDb } from '@/db/client';
import { projectSignoffs } from '@/lib/review/signoff';

/** Signed-off analyses of a project (who, when, which model version), for the project page. */
export function ProjectSignoffs({ projectId }: { projectId: string }) {
  const rows = projectSignoffs(getDb(), projectId);
  return (
    <Card className="mt-6 p-6">
      <h2 className="text-lg font-semibold text-ink-900">Sign-offs</h2>
      {rows.length === 0 ? (
        <p className="mt-1 text-sm text-ink-500">No analysis of this project is signed off yet. A reviewer signs off once every error finding is waived or verified.</p>
      ) : (
        <ul className="mt-2 divide-y divide-wafer-200 text-sm" data-testid="project-signoffs">
          {rows.map((r) => (
            <li key={r.analysisId} className="flex flex-wrap items-baseline justify-between gap-2 py-2">
              <Link href={`/analyses/${r.analysisId}`} className="font-medium text-ink-900 hover:underline">
                {r.layoutName} r{r.revision}
              </Link>
              <span className="font-mono text-xs text-ink-500">
                signed off by {r.signedByName} · {r.signedAt.slice(0, 16).replace('T', ' ')} UTC · model {r.modelName} {r.modelVersion}
              </span>
            </li>
          ))}
        </ul>
      )}
    </Card>
  );
}
