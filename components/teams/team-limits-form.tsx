'use client';

import { useActionState } from 'react';
import { saveTeamLimitsAction } from '@/app/(app)/teams/[teamId]/limits-action';
import { Button } from '@/components/ui/button';
import { Field, FormAlert } from '@/components/ui/field';
import type { FormState } from '@/lib/http/form-state';
import type { TeamLimits } from '@/lib/jobs/team-limits';

const MiB = 1024 ** 2;
const mib = (bytes: number) => String(Math.round(bytes / MiB));
const n = (v: number) => v.toLocaleString('en-US');

/**
 * Team resource limits (admins). Uploads beyond the geometry limits and analyses beyond the byte limits are
 * refused with a message naming the limit; existing layouts and results are kept when a limit is lowered.
 */
export function TeamLimitsForm({ teamId, limits, defaults, storedBytes }: { teamId: string; limits: TeamLimits; defaults: TeamLimits; storedBytes: number }) {
  const [state, action, pending] = useActionState<FormState, FormData>(saveTeamLimitsAction, {});
  const v = state.values;
  return (
    <form action={action} className="space-y-3" noValidate data-testid="team-limits-form">
      <input type="hidden" name="teamId" value={teamId} />
      <FormAlert message={state.message} tone={state.ok ? 'success' : 'error'} />
      <Field
        label="Polygons per layout (after flattening)"
        name="maxPolygons"
        inputMode="numeric"
        defaultValue={v?.maxPolygons ?? String(limits.maxPolygons)}
        errors={state.fieldErrors?.maxPolygons}
        hint={`Default ${n(defaults.maxPolygons)}; at most 25,000,000.`}
      />
      <Field
        label="Points per layout (after flattening)"
        name="maxPoints"
        inputMode="numeric"
        defaultValue={v?.maxPoints ?? String(limits.maxPoints)}
        errors={state.fieldErrors?.maxPoints}
        hint={`Default ${n(defaults.maxPoints)}; at most 100,000,000.`}
      />
      <Field
        label="Result size per analysis (MiB)"
        name="maxAnalysisMiB"
        inputMode="numeric"
        defaultValue={v?.maxAnalysisMiB ?? mib(limits.maxAnalysisBytes)}
        errors={state.fieldErrors?.maxAnalysisMiB}
        hint={`Default ${mib(defaults.maxAnalysisBytes)} MiB of maps and per-opening results.`}
      />
      <Field
        label="Stored results, whole team (MiB)"
        name="maxStoredMiB"
        inputMode="numeric"
        defaultValue={v?.maxStoredMiB ?? mib(limits.maxStoredBytes)}
        errors={state.fieldErrors?.maxStoredMiB}
        hint={`In use: ${mib(storedBytes)} MiB. Default ${mib(defaults.maxStoredBytes)} MiB.`}
      />
      <Button type="submit" variant="secondary" disabled={pending}>
        {pending ? 'Saving…' : 'Save limits'}
      </Button>
    </form>
  );
}
