'use client';

import { FlagsTable } from '@/components/pipeline/flags-table';

/** The findings section of the analysis page. */
export function FindingsSection({ analysisId }: { analysisId: string }) {
  return <FlagsTable analysisId={analysisId} />;
}
