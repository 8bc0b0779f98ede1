import { z } from 'zod';
import { TEAM_ROLES } from '@/db/schema/teams';

// Form and JSON body schemas shared by server actions and route handlers (one definition per input).

export const emailField = z
  .string()
  .trim()
  .toLowerCase()
  .min(1, 'Enter your e-mail address.')
  .max(254, 'That e-mail address is too long.')
  .pipe(z.email('Enter a valid e-mail address, like name@example.com.'));

export const passwordField = z
  .string()
  .min(10, 'Use at least 10 characters.')
  .max(200, 'Use at most 200 characters.');

export const personName = z.string().trim().min(1, 'Enter your name.').max(80, 'Keep the name under 80 characters.');

export const teamName = z.string().trim().min(2, 'Give the team a name of at least 2 characters.').max(80, 'Keep the team name under 80 characters.');

export const signInInput = z.object({
  email: emailField,
  password: z.string().min(1, 'Enter your password.').max(200, 'Use at most 200 characters.'),
});

export const signUpInput = z.object({
  name: personName,
  email: emailField,
  password: passwordField,
  /** optional: a new team the account becomes admin of (always created for the first account) */
  teamName: z.union([z.literal(''), teamName]).optional(),
});

export const acceptInviteNewAccountInput = z.object({ name: personName, password: passwordField });

export const projectInput = z.object({
  name: z
    .string()
    .trim()
    .min(2, 'Give the project a name of at least 2 characters.')
    .max(80, 'Keep the project name under 80 characters.'),
  description: z.string().trim().max(500, 'Keep the description under 500 characters.').default(''),
});

export const inviteInput = z.object({
  email: emailField,
  role: z.enum(TEAM_ROLES, 'Choose one of the four roles.'),
});

export const roleChangeInput = z.object({ role: z.enum(TEAM_ROLES, 'Choose one of the four roles.') });

export const teamUpdateInput = z.object({ name: teamName });

export const idParam = z.string().min(1).max(64).regex(/^[A-Za-z0-9_-]+$/, 'Malformed id.');
