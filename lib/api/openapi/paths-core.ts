import { createProjectBody } from '@/lib/api/schemas';
import { inviteInput, projectInput, roleChangeInput, signInInput, signUpInput, teamUpdateInput } from '@/lib/data/schemas';
import { arrayOf, nullable, object, operation, queryParam, ref, str } from './build';
import type { PathItemObject } from './types';

// Accounts, teams and projects: the routes under app/api/v1/{auth,me,invites,teams,projects}.

const teamId = { teamId: 'Team id.' };
const userOk = { 200: { description: 'The user.', schema: object({ user: ref('User') }) } };

export const CORE_PATHS: Record<string, PathItemObject> = {
  '/auth/session': {
    get: operation('get', {
      id: 'getSession',
      tag: 'Account',
      summary: 'Current session user',
      access: 'session',
      ok: userOk,
    }),
    post: operation('post', {
      id: 'signIn',
      tag: 'Account',
      summary: 'Sign in',
      description: 'Sets the session cookie. Failed attempts are limited per account and address, per address and per account with exponential backoff (429 with Retry-After); an address the account signed in from before is not held back by failures from elsewhere.',
      access: 'public',
      body: signInInput,
      ok: userOk,
      errors: [401, 429],
    }),
    delete: operation('delete', {
      id: 'signOut',
      tag: 'Account',
      summary: 'Sign out',
      description: 'Invalidates the session on the server and clears the cookie.',
      access: 'public',
      ok: { 204: { description: 'Signed out.' } },
    }),
  },
  '/auth/sign-up': {
    post: operation('post', {
      id: 'signUp',
      tag: 'Account',
      summary: 'Create an account',
      description: 'Creates the account and signs it in. With `teamName` the account becomes admin of a new team. Common and trivial passwords are refused (400 on `password`); sign-ups per address are limited with backoff (429).',
      access: 'public',
      body: signUpInput,
      ok: { 201: { description: 'Created and signed in.', schema: object({ user: ref('User') }) } },
      errors: [409, 429],
    }),
  },
  '/me': {
    get: operation('get', {
      id: 'getMe',
      tag: 'Account',
      summary: 'Who am I',
      description: 'The caller, their teams with roles, and how the request was authenticated. With a token only the token\'s team is listed.',
      access: 'session-or-token',
      ok: {
        200: {
          description: 'The caller.',
          schema: object({
            user: ref('User'),
            teams: arrayOf(ref('TeamSummary')),
            auth: object({
              kind: { type: 'string', enum: ['session', 'token'] },
              teamId: nullable(str('The only team a token reaches; null for a session.')),
            }),
          }),
        },
      },
    }),
  },
  '/invites/{token}/accept': {
    post: operation('post', {
      id: 'acceptInvite',
      tag: 'Teams',
      summary: 'Accept an invitation',
      description: 'The signed-in user joins the team with the invited role. The invitation must be addressed to their e-mail (403 otherwise).',
      access: 'session',
      path: { token: 'The token from the invitation link.' },
      ok: { 200: { description: 'Joined.', schema: object({ teamId: str(), role: ref('Role') }) } },
    }),
  },
  '/teams/{teamId}': {
    get: operation('get', {
      id: 'getTeam',
      tag: 'Teams',
      summary: 'Team and members',
      access: 'session-or-token',
      permission: 'team.read',
      path: teamId,
      ok: { 200: { description: 'The team.', schema: object({ id: str(), name: str(), myRole: ref('Role'), members: arrayOf(ref('Member')) }) } },
    }),
    patch: operation('patch', {
      id: 'renameTeam',
      tag: 'Teams',
      summary: 'Rename the team',
      access: 'session-or-token',
      permission: 'team.manage',
      path: teamId,
      body: teamUpdateInput,
      ok: { 200: { description: 'Renamed.', schema: ref('Ok') } },
    }),
  },
  '/teams/{teamId}/members/{userId}': {
    patch: operation('patch', {
      id: 'changeMemberRole',
      tag: 'Teams',
      summary: 'Change a member\'s role',
      description: 'A team always keeps at least one admin (409).',
      access: 'session-or-token',
      permission: 'team.manage',
      path: { ...teamId, userId: 'Member\'s user id.' },
      body: roleChangeInput,
      ok: { 200: { description: 'Changed.', schema: ref('Ok') } },
      errors: [409],
    }),
    delete: operation('delete', {
      id: 'removeMember',
      tag: 'Teams',
      summary: 'Remove a member',
      description: 'The last admin cannot be removed (409). The member\'s API tokens for this team are revoked; inviting them again does not bring them back.',
      access: 'session-or-token',
      permission: 'team.manage',
      path: { ...teamId, userId: 'Member\'s user id.' },
      ok: { 204: { description: 'Removed.' } },
      errors: [409],
    }),
  },
  '/teams/{teamId}/invites': {
    get: operation('get', {
      id: 'listInvites',
      tag: 'Teams',
      summary: 'Pending invitations',
      access: 'session-or-token',
      permission: 'members.invite',
      path: teamId,
      ok: { 200: { description: 'Pending invitations.', schema: object({ invites: arrayOf(ref('Invite')) }) } },
    }),
    post: operation('post', {
      id: 'createInvite',
      tag: 'Teams',
      summary: 'Invite by e-mail',
      access: 'session-or-token',
      permission: 'members.invite',
      path: teamId,
      body: inviteInput,
      ok: { 201: { description: 'Invitation created and e-mailed.', schema: object({ invite: ref('Invite') }) } },
      errors: [409],
    }),
  },
  '/teams/{teamId}/invites/{inviteId}': {
    delete: operation('delete', {
      id: 'cancelInvite',
      tag: 'Teams',
      summary: 'Cancel a pending invitation',
      description: 'The invitation link stops working at once.',
      access: 'session-or-token',
      permission: 'members.invite',
      path: { ...teamId, inviteId: 'Invitation id.' },
      ok: { 204: { description: 'Cancelled.' } },
    }),
  },
  '/teams/{teamId}/outbox': {
    get: operation('get', {
      id: 'listOutbox',
      tag: 'Teams',
      summary: 'Development mail outbox',
      description: 'Mail kept by the built-in development SMTP server for this team (only when no real SMTP server is configured).',
      access: 'session-or-token',
      permission: 'outbox.view',
      path: teamId,
      ok: { 200: { description: 'Messages, newest first.', schema: object({ messages: arrayOf(ref('OutboxMessage')) }) } },
    }),
  },
  '/teams/{teamId}/projects': {
    get: operation('get', {
      id: 'listTeamProjects',
      tag: 'Projects',
      summary: 'Projects of one team',
      access: 'session-or-token',
      permission: 'team.read',
      path: teamId,
      ok: { 200: { description: 'Projects, newest first.', schema: object({ projects: arrayOf(ref('Project')) }) } },
    }),
    post: operation('post', {
      id: 'createTeamProject',
      tag: 'Projects',
      summary: 'Create a project in a team',
      description: 'Same as POST /projects with the team in the path. Names are unique within a team (409).',
      access: 'session-or-token',
      permission: 'project.create',
      path: teamId,
      body: projectInput,
      ok: { 201: { description: 'Created.', schema: object({ project: ref('Project') }) } },
      errors: [409],
    }),
  },
  '/projects': {
    get: operation('get', {
      id: 'listProjects',
      tag: 'Projects',
      summary: 'My projects',
      description: 'Projects of every team the caller belongs to, newest first, with the caller\'s role. A token lists only its own team\'s projects.',
      access: 'session-or-token',
      query: [queryParam('teamId', 'Only this team\'s projects.', { type: 'string' })],
      ok: { 200: { description: 'Projects.', schema: object({ projects: arrayOf(ref('ProjectWithRole')) }) } },
    }),
    post: operation('post', {
      id: 'createProject',
      tag: 'Projects',
      summary: 'Create a project',
      description: 'Names are unique within a team (409, field `name`). A token can only create projects in its own team (404 for others).',
      access: 'session-or-token',
      permission: 'project.create',
      body: createProjectBody,
      ok: { 201: { description: 'Created.', schema: object({ project: ref('Project') }) } },
      errors: [409],
    }),
  },
  '/projects/{projectId}': {
    get: operation('get', {
      id: 'getProject',
      tag: 'Projects',
      summary: 'One project',
      description: 'Members of the project\'s team (and tokens of that team) only; everyone else gets 404.',
      access: 'session-or-token',
      permission: 'project.read',
      path: { projectId: 'Project id.' },
      ok: { 200: { description: 'The project with the caller\'s role.', schema: object({ project: ref('ProjectWithRole') }) } },
    }),
  },
  '/openapi.json': {
    get: operation('get', {
      id: 'getOpenApi',
      tag: 'Meta',
      summary: 'This document',
      access: 'public',
      ok: { 200: { description: 'OpenAPI 3.1 document.', schema: { type: 'object' } } },
    }),
  },
};
