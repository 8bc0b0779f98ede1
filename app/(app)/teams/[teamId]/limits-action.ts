'use server';

import { revalidatePath } from 'next/cache';
import { z } from 'zod';
import { getDb } from '@/db/client';
import { requireTeamPermission } from '@/lib/auth/guard';
import { idParam } from '@/lib/data/schemas';
import { errorToFormState, formValues, type FormState } from '@/lib/http/form-state';
import { setTeamLimits, teamLimitsInput } from '@/lib/jobs/team-limits';

// The form takes byte limits in whole MiB; ranges match teamLimitsInput (16 MiB .. 64 GiB and 4 TiB).
const whole = (what: string, min: number, max: number) =>
  z.coerce
    .number({ error: `${what}: enter a whole number` })
    .int(`${what}: enter a whole number`)
    .min(min, `${what}: at least ${min.toLocaleString('en-US')}`)
    .max(max, `${what}: at most ${max.toLocaleString('en-US')}`);
const teamLimitsForm = z
  .object({
    maxPolygons: whole('Polygons', 1_000, 25_000_000),
    maxPoints: whole('Points', 4_000, 100_000_000),
    maxAnalysisMiB: whole('Result size per analysis (MiB)', 16, 65_536),
    maxStoredMiB: whole('Stored results (MiB)', 16, 4_194_304),
  })
  .refine((f) => f.maxStoredMiB >= f.maxAnalysisMiB, { message: 'Stored results must be at least the result size per analysis', path: ['maxStoredMiB'] });

/** Saves the team's resource limits (admins: 'team.manage', checked here, not only by hiding the form). */
export async function saveTeamLimitsAction(_prev: FormState, formData: FormData): Promise<FormState> {
  const values = formValues(formData);
  try {
    const teamId = idParam.parse(values.teamId);
    const { user } = await requireTeamPermission(teamId, 'team.manage');
    const form = teamLimitsForm.parse(values);
    const MiB = 1024 ** 2;
    const parsed = teamLimitsInput.parse({
      maxPolygons: form.maxPolygons,
      maxPoints: form.maxPoints,
      maxAnalysisBytes: form.maxAnalysisMiB * MiB,
      maxStoredBytes: form.maxStoredMiB * MiB,
    });
    setTeamLimits(getDb(), teamId, parsed, user.id);
    revalidatePath(`/teams/${teamId}`);
    return { ok: true, message: 'Limits saved. They apply to the next upload and the next analysis.', values };
  } catch (error) {
    return errorToFormState(error, values);
  }
}
