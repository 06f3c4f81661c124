/**
 * The session types. Plain TypeScript on purpose: this file sits on the path of the
 * first chunk (interceptor → Auth), and any zod import here drags zod's core into it.
 */

/** Roles inside one research group; admin can also do what designer and reviewer do. */
export type Role = 'admin' | 'designer' | 'reviewer' | 'viewer';
export const roles: readonly Role[] = ['admin', 'designer', 'reviewer', 'viewer'];

/** One group the signed-in user belongs to, with the user's role there. */
export interface GroupMembership {
  id: string;
  name: string;
  slug: string;
  role: Role;
}

/** What GET /api/auth/session, sign-in and invitation acceptance answer. */
export interface Session {
  user: { id: string; email: string; name: string };
  groups: GroupMembership[];
  csrfToken: string;
  /** The person who runs this installation: the only one who may read the local mail outbox. */
  siteOperator: boolean;
}
