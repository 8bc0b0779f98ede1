'use server';

import { revalidatePath } from 'next/cache';
import { redirect } from 'next/navigation';
import { z } from 'zod';
import { createProject } from '@/lib/data/projects';
import { idParam, projectInput } from '@/lib/data/schemas';
import { errorToFormState, formValues, type FormState } from '@/lib/http/form-state';

const createProjectForm = projectInput.extend({ teamId: z.string().min(1, 'Choose a team.').pipe(idParam) });

export async function createProjectAction(_prev: FormState, formData: FormData): Promise<FormState> {
  const values = formValues(formData);
  let id: string;
  try {
    const input = createProjectForm.parse(values);
    id = (await createProject(input.teamId, { name: input.name, description: input.description })).id;
  } catch (error) {
    return errorToFormState(error, values);
  }
  revalidatePath('/projects');
  redirect(`/projects/${id}`);
}
