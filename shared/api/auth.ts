/** Sign-in, the session, password reset; and the public side of invitation links. */
import * as z from 'zod';
import { roleSchema } from './enums.js';
import { declareRoute, empty, json } from './route.js';

/** An e-mail as typed in a form: surrounding spaces and case do not matter (stored lower-case). */
export const emailField = z.string().trim().toLowerCase().pipe(z.email('must be an e-mail address').max(320));

/** bcrypt reads only the first 72 bytes, so longer passwords are refused instead of silently cut. */
export const newPasswordSchema = z
  .string()
  .min(8, 'must be at least 8 characters')
  .refine((p) => new TextEncoder().encode(p).length <= 72, 'must be at most 72 bytes (bcrypt ignores the rest)');

export const signInBody = z.object({ email: emailField, password: z.string().min(1).max(1000) });
export const resetBody = z.object({ email: emailField });
export const confirmBody = z.object({ token: z.string().min(1).max(200), password: newPasswordSchema });
export const invitationTokenParams = z.object({ token: z.string().min(1).max(200) });
export const acceptBody = z.object({ name: z.string().trim().min(1, 'must not be empty').max(100), password: newPasswordSchema });

export const groupOfUserSchema = z.object({ id: z.uuid(), name: z.string(), slug: z.string(), role: roleSchema }).meta({ id: 'GroupOfUser' });
export type GroupOfUser = z.infer<typeof groupOfUserSchema>;

export const sessionSchema = z
  .object({
    user: z.object({ id: z.uuid(), email: z.string(), name: z.string() }),
    groups: z.array(groupOfUserSchema),
    csrfToken: z.string().meta({ description: "This session's CSRF value: echo it in X-CSRF-Token on unsafe requests; empty for personal-token callers." }),
    siteOperator: z.boolean().meta({ description: 'True for the site operator, who alone may read the local mail outbox.' }),
  })
  .meta({ id: 'Session' });
export type Session = z.infer<typeof sessionSchema>;

export const messageSchema = z.object({ message: z.string() }).meta({ id: 'Message' });

export const invitationPreviewSchema = z
  .object({ email: z.string(), groupName: z.string(), role: roleSchema, invitedBy: z.string().nullable() })
  .meta({ id: 'InvitationPreview' });
export type InvitationPreview = z.infer<typeof invitationPreviewSchema>;

export const signInRoute = declareRoute({
  id: 'signIn',
  method: 'post',
  path: '/auth/sign-in',
  tag: 'auth',
  summary: 'Sign in with e-mail and password; sets the pw_session and pw_csrf cookies',
  access: 'public',
  body: signInBody,
  answer: json(200, 'Signed in', sessionSchema),
  errors: { 401: 'invalid_credentials', 429: 'rate_limited: too many attempts' },
});

export const signOutRoute = declareRoute({
  id: 'signOut',
  method: 'post',
  path: '/auth/sign-out',
  tag: 'auth',
  summary: 'Sign out: ends the session on the server and clears both cookies',
  access: 'public',
  notes: 'While the session cookie is valid, X-CSRF-Token must match pw_csrf.',
  answer: empty(204, 'Signed out'),
  errors: { 403: 'csrf_failed' },
});

export const sessionRoute = declareRoute({
  id: 'getSession',
  method: 'get',
  path: '/auth/session',
  tag: 'auth',
  summary: 'Who is signed in, their groups, the CSRF value',
  access: 'signed-in',
  answer: json(200, 'The session', sessionSchema),
});

export const requestPasswordResetRoute = declareRoute({
  id: 'requestPasswordReset',
  method: 'post',
  path: '/auth/password-reset',
  tag: 'auth',
  summary: 'Mail a password-reset link (answers the same whether or not the e-mail has an account)',
  access: 'public',
  body: resetBody,
  answer: json(202, 'Accepted', messageSchema),
  errors: { 429: 'rate_limited: too many attempts' },
});

export const confirmPasswordResetRoute = declareRoute({
  id: 'confirmPasswordReset',
  method: 'post',
  path: '/auth/password-reset/confirm',
  tag: 'auth',
  summary: 'Set a new password with the token from the reset link; ends every session and revokes every personal API token of the account',
  access: 'public',
  body: confirmBody,
  answer: empty(204, 'Password changed'),
  errors: { 429: 'rate_limited: too many failed attempts from this address' },
});

export const previewInvitationRoute = declareRoute({
  id: 'previewInvitation',
  method: 'get',
  path: '/invitations/{token}',
  tag: 'invitations',
  summary: 'What an invitation link offers',
  access: 'public',
  params: invitationTokenParams,
  answer: json(200, 'The invitation', invitationPreviewSchema),
  errors: { 404: 'unknown token', 410: 'invitation_gone: accepted, withdrawn or expired' },
});

export const acceptInvitationRoute = declareRoute({
  id: 'acceptInvitation',
  method: 'post',
  path: '/invitations/{token}/accept',
  tag: 'invitations',
  summary: 'Accept an invitation: creates the account (or, for an existing one, checks its password) and signs in',
  access: 'public',
  params: invitationTokenParams,
  body: acceptBody,
  answer: json(201, 'Member of the group, signed in', sessionSchema),
  errors: {
    401: 'invalid_credentials (existing account)',
    404: 'unknown token',
    410: 'invitation_gone',
    429: 'rate_limited: too many failed attempts from this address',
  },
});
