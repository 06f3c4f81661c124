/** The caller's own account and personal API tokens; the audit entries both groups and accounts show. */
import * as z from 'zod';
import { personRef, timestamp } from './fields.js';
import { declareRoute, empty, json } from './route.js';

export const activityEntrySchema = z
  .object({ id: z.uuid(), at: timestamp(), actor: personRef.nullable(), action: z.string(), subject: z.string(), details: z.record(z.string(), z.unknown()) })
  .meta({ id: 'ActivityEntry' });
export type ActivityEntry = z.infer<typeof activityEntrySchema>;

export const apiTokenSchema = z
  .object({ id: z.uuid(), name: z.string(), createdAt: timestamp(), lastUsedAt: timestamp().nullable() })
  .meta({ id: 'ApiToken' });
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
  notes: 'Sign-ins and failed ones, sign-outs, rate-limit and CSRF refusals, password resets, tokens, role changes, and reads of mail addressed to the account.',
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
