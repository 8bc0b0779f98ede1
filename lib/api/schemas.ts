import { z } from 'zod';
import { idParam, projectInput } from '@/lib/data/schemas';

// Request schemas of the REST routes that have no form twin in lib/data/schemas.ts. Route files may only export
// handlers, so the schemas the OpenAPI document also reads live here.

/** Body of POST /api/v1/projects. */
export const createProjectBody = projectInput.extend({ teamId: idParam });

/** Query of GET /api/v1/projects. */
export const listProjectsQuery = z.object({ teamId: idParam.optional() });

/** The API-token form: which team the token reaches and a name to recognise it by. */
export const apiTokenInput = z.object({
  teamId: z.string().min(1, 'Choose a team.').pipe(idParam),
  name: z
    .string()
    .trim()
    .min(2, 'Give the token a name of at least 2 characters, e.g. "CI on main".')
    .max(60, 'Keep the token name under 60 characters.'),
});

/** The revoke button's hidden field. */
export const apiTokenIdInput = z.object({ tokenId: idParam });
