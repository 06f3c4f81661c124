// zod/mini: the classic build pulls ~450 kB (all locales) into the first chunk.
import * as z from 'zod/mini';

/** Roles inside one research group; admin can also do what designer and reviewer do. */
export const roleSchema = z.enum(['admin', 'designer', 'reviewer', 'viewer']);
export type Role = z.infer<typeof roleSchema>;
export const roles: readonly Role[] = roleSchema.options;

/** One group the signed-in user belongs to, with the user's role there. */
export const groupMembershipSchema = z.object({
  id: z.string(),
  name: z.string(),
  slug: z.string(),
  role: roleSchema,
});
export type GroupMembership = z.infer<typeof groupMembershipSchema>;

/** What GET /api/auth/session, sign-in and invitation acceptance answer. */
export const sessionSchema = z.object({
  user: z.object({ id: z.string(), email: z.string(), name: z.string() }),
  groups: z.array(groupMembershipSchema),
  csrfToken: z.string(),
});
export type Session = z.infer<typeof sessionSchema>;
