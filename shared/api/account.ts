/**
 * The HTTP contract of the signed-in person's own account (/api/account): request
 * and answer schemas the server validates with, the client parses with and the
 * OpenAPI document shows.
 */
import { z } from 'zod';

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
