/** The caller's own account and personal API tokens; the audit entries both groups and accounts show. */
import * as z from 'zod';
import { personRef, timestamp } from './fields.js';
import { declareRoute, empty, json } from './route.js';

export const activityEntrySchema = z
  .object({ id: z.uuid(), at: timestamp(), actor: personRef.nullable(), action: z.string(), subject: z.string(), details: z.record(z.string(), z.unknown()) })
  .meta({ id: 'ActivityEntry' });
export type ActivityEntry = z.infer<typeof activityEntrySchema>;

export const apiTokenSchema = z.object({ id: z.uuid(), name: z.string(), createdAt: timestamp(), lastUsedAt: timestamp().nullable() }).meta({ id: 'ApiToken' });
export type ApiToken = z.infer<typeof apiTokenSchema>;

export const createdApiTokenSchema = z
  .object({
    id: z.uuid(),
    name: z.string(),
    token: z.string().meta({ description: 'pwt_ and 43 characters; shown this once, stored only as its hash.' }),
    createdAt: timestamp(),
  })
  .meta({ id: 'CreatedApiToken' });
export type CreatedApiToken = z.infer<typeof createdApiTokenSchema>;

export const accountActivityQuery = z.object({ limit: z.coerce.number().int().min(1).max(200).default(30) });
export const createTokenBody = z.object({ name: z.string().trim().min(1, 'must not be empty').max(100) });
export const tokenParams = z.object({ id: z.uuid() });

export const accountActivityRoute = declareRoute({
  id: 'listAccountActivity',
  method: 'get',
  path: '/account/activity',
  tag: 'account',
  summary: "Audit entries about the caller's own account, newest first",
  access: 'signed-in',
  notes:
    'Sign-ins and failed ones, sign-outs, rate-limit and CSRF refusals, password resets, tokens, role changes, and reads of mail addressed to the account.',
  query: accountActivityQuery,
  answer: json(200, 'Entries', z.array(activityEntrySchema)),
});

export const listTokensRoute = declareRoute({
  id: 'listApiTokens',
  method: 'get',
  path: '/tokens',
  tag: 'tokens',
  summary: "The caller's active personal API tokens (never the secret)",
  access: 'signed-in',
  answer: json(200, 'Tokens', z.array(apiTokenSchema)),
});

export const createTokenRoute = declareRoute({
  id: 'createApiToken',
  method: 'post',
  path: '/tokens',
  tag: 'tokens',
  summary: 'Create a personal API token for scripts and notebooks',
  access: 'signed-in',
  body: createTokenBody,
  answer: json(201, 'The token, with its secret shown this once', createdApiTokenSchema),
});

export const revokeTokenRoute = declareRoute({
  id: 'revokeApiToken',
  method: 'delete',
  path: '/tokens/{id}',
  tag: 'tokens',
  summary: 'Revoke a personal API token',
  access: 'signed-in',
  params: tokenParams,
  answer: empty(204, 'Revoked'),
});

// The person's own profile, password and sessions.

/** A new password: at least 8 characters, at most 72 bytes (bcrypt ignores the rest). */
export const accountNewPassword = z
  .string()
  .min(8, 'must be at least 8 characters')
  .refine((p) => new TextEncoder().encode(p).length <= 72, 'must be at most 72 bytes (bcrypt ignores the rest)');

export const accountProfileSchema = z.object({
  id: z.string(),
  email: z.string(),
  name: z.string(),
});
export type AccountProfile = z.infer<typeof accountProfileSchema>;

export const accountRenameBody = z.object({
  name: z.string().trim().min(1, 'the name is empty').max(200, 'at most 200 characters'),
});

export const passwordChangeBody = z.object({
  currentPassword: z.string().min(1, 'enter your current password').max(1000),
  newPassword: accountNewPassword,
});

export const signOutEverywhereAnswer = z.object({
  /** Sessions ended, this browser's included. */
  sessionsEnded: z.number().int().nonnegative(),
});

export const accountProfileRoute = declareRoute({
  id: 'getAccount',
  method: 'get',
  path: '/account',
  tag: 'account',
  summary: "The caller's e-mail and name",
  access: 'signed-in',
  answer: json(200, 'The account', accountProfileSchema),
});

export const accountRenameRoute = declareRoute({
  id: 'renameAccount',
  method: 'patch',
  path: '/account',
  tag: 'account',
  summary: "Change the caller's display name",
  access: 'signed-in',
  body: accountRenameBody,
  answer: json(200, 'The account as renamed', accountProfileSchema),
});

export const passwordChangeRoute = declareRoute({
  id: 'changePassword',
  method: 'post',
  path: '/account/password',
  tag: 'account',
  summary: 'Change the password (the current one is required); every other session ends',
  access: 'signed-in',
  notes: 'A browser that makes the change gets a fresh session and stays signed in; a wrong current password is a 400 on `currentPassword`.',
  body: passwordChangeBody,
  answer: empty(204, 'Changed'),
});

export const signOutEverywhereRoute = declareRoute({
  id: 'signOutEverywhere',
  method: 'post',
  path: '/account/sign-out-everywhere',
  tag: 'account',
  summary: 'End every browser session of the account, this one included (API tokens stay)',
  access: 'signed-in',
  answer: json(200, 'How many sessions ended', signOutEverywhereAnswer),
});
