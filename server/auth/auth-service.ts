import type { Db } from '../db/client.js';
import { writeAudit } from '../audit/audit-log.js';
import { ApiError } from '../http/error-handler.js';
import type { Mailer } from '../mail/mailer.js';
import { passwordResetMail } from '../mail/password-reset-mail.js';
import { hashOpaqueToken, newOpaqueToken } from './opaque-token.js';
import { dummyPasswordHash, hashPassword, verifyPassword } from './password.js';
import { insertResetToken, lockResetToken, useAllResetTokens } from './reset-token-repository.js';
import { findUserByEmail, findUserById, updatePasswordHash, type UserRow } from './user-repository.js';

/** Reset links are valid for one hour. */
export const resetLinkLifetimeMs = 60 * 60 * 1000;

export interface AuthServiceDeps {
  db: Db;
  mailer: Mailer;
  publicUrl: string;
  passwordCost: number;
  log: (msg: string, err: unknown) => void;
}

export class AuthService {
  constructor(private readonly deps: AuthServiceDeps) {}

  /** The same answer for an unknown e-mail and a wrong password, after the same bcrypt work. */
  async signIn(email: string, password: string): Promise<UserRow> {
    const user = await findUserByEmail(this.deps.db, email);
    const ok = await verifyPassword(password, user?.passwordHash ?? (await dummyPasswordHash(this.deps.passwordCost)));
    if (!user || !ok) throw new ApiError(401, 'invalid_credentials', 'E-mail or password is wrong.');
    await writeAudit(this.deps.db, { groupId: null, actorId: user.id, action: 'auth.signed_in', subject: user.email });
    return user;
  }

  /**
   * Creates a one-hour link and mails it without waiting for the mail, so the answer
   * (always 202) takes the same time whether or not the e-mail has an account.
   */
  async requestPasswordReset(email: string): Promise<void> {
    const { db, mailer, publicUrl, log } = this.deps;
    const user = await findUserByEmail(db, email);
    if (!user) return;
    const token = newOpaqueToken();
    await db.transaction(async (tx) => {
      await insertResetToken(tx, user.id, hashOpaqueToken(token), new Date(Date.now() + resetLinkLifetimeMs));
      await writeAudit(tx, { groupId: null, actorId: null, action: 'auth.password_reset_requested', subject: user.email });
    });
    const link = `${publicUrl}/reset-password?token=${encodeURIComponent(token)}`;
    mailer
      .send(passwordResetMail({ to: user.email, name: user.name, link }))
      .catch((err: unknown) => log(`[poleward] password-reset mail to ${user.email} failed:`, err));
  }

  /** Works once: the row is locked, checked and marked used in one transaction. */
  async confirmPasswordReset(token: string, password: string): Promise<void> {
    const hash = await hashPassword(password, this.deps.passwordCost);
    await this.deps.db.transaction(async (tx) => {
      const row = await lockResetToken(tx, hashOpaqueToken(token));
      if (!row || row.usedAt || row.expiresAt.getTime() <= Date.now()) {
        throw new ApiError(400, 'token_invalid', 'This password-reset link is unknown, already used or expired; ask for a new one.');
      }
      const user = await findUserById(tx, row.userId);
      if (!user) throw new ApiError(400, 'token_invalid', 'This password-reset link belongs to an account that no longer exists.');
      await updatePasswordHash(tx, user.id, hash);
      await useAllResetTokens(tx, user.id);
      await writeAudit(tx, { groupId: null, actorId: user.id, action: 'auth.password_reset', subject: user.email });
    });
  }
}
