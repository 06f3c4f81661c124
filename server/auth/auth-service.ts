import type { Db } from '../db/client.js';
import { writeAudit } from '../audit/audit-log.js';
import { recordSecurityEvent } from '../audit/security-event.js';
import { ApiError } from '../http/error-handler.js';
import type { Mailer } from '../mail/mailer.js';
import { passwordResetMail } from '../mail/password-reset-mail.js';
import { revokeAllApiTokens } from './api-token-repository.js';
import { hashOpaqueToken, newOpaqueToken } from './opaque-token.js';
import { dummyPasswordHash, hashPassword, verifyPassword } from './password.js';
import type { PasswordHasher } from './password-hasher.js';
import { findResetToken, insertResetToken, lockResetToken, useAllResetTokens } from './reset-token-repository.js';
import { revokeAllSessions, revokeSession } from './session-repository.js';
import { findUserByEmail, findUserById, updatePasswordHash, type UserRow } from './user-repository.js';

/** Reset links are valid for one hour. */
const resetLinkLifetimeMs = 60 * 60 * 1000;

interface AuthServiceDeps {
  db: Db;
  mailer: Mailer;
  publicUrl: string;
  passwordCost: number;
  passwords: PasswordHasher;
  log: (msg: string, err: unknown) => void;
}

function invalidResetLink(): ApiError {
  return new ApiError(400, 'token_invalid', 'This password-reset link is unknown, already used or expired; ask for a new one.');
}

type ResetRow = Awaited<ReturnType<typeof findResetToken>>;

function usable(row: ResetRow): row is NonNullable<ResetRow> {
  return !!row && !row.usedAt && row.expiresAt.getTime() > Date.now();
}

export class AuthService {
  constructor(private readonly deps: AuthServiceDeps) {}

  /**
   * The same answer for an unknown e-mail and a wrong password, after the same bcrypt
   * work. Every failure is recorded; one on a real account is shown to its owner.
   */
  async signIn(email: string, password: string, ip: string | undefined): Promise<UserRow> {
    const { db, passwords, passwordCost, log } = this.deps;
    const user = await findUserByEmail(db, email);
    const ok = await verifyPassword(password, user?.passwordHash ?? (await dummyPasswordHash(passwordCost, passwords)), passwords);
    if (!user || !ok) {
      await recordSecurityEvent(
        db,
        { groupId: null, actorId: null, accountId: user?.id ?? null, action: 'auth.sign_in_failed', subject: email, details: { ip } },
        log,
      );
      throw new ApiError(401, 'invalid_credentials', 'E-mail or password is wrong.');
    }
    await writeAudit(db, { groupId: null, actorId: user.id, accountId: user.id, action: 'auth.signed_in', subject: user.email, details: { ip } });
    return user;
  }

  /** Revokes the session server-side: its cookie answers 401 from now on, wherever it was copied to. */
  async signOut(userId: string, sessionId: string, ip: string | undefined): Promise<void> {
    await this.deps.db.transaction(async (tx) => {
      if (!(await revokeSession(tx, sessionId))) return;
      const user = await findUserById(tx, userId);
      await writeAudit(tx, { groupId: null, actorId: userId, accountId: userId, action: 'auth.signed_out', subject: user?.email ?? userId, details: { ip } });
    });
  }

  /**
   * Creates a one-hour link and mails it. The route calls this after it has answered
   * 202, so the answer takes the same time whether or not the e-mail has an account.
   */
  async requestPasswordReset(email: string, ip: string | undefined): Promise<void> {
    const { db, mailer, publicUrl } = this.deps;
    const user = await findUserByEmail(db, email);
    if (!user) return;
    const token = newOpaqueToken();
    await db.transaction(async (tx) => {
      await insertResetToken(tx, user.id, hashOpaqueToken(token), new Date(Date.now() + resetLinkLifetimeMs));
      await writeAudit(tx, { groupId: null, actorId: null, accountId: user.id, action: 'auth.password_reset_requested', subject: user.email, details: { ip } });
    });
    const link = `${publicUrl}/reset-password?token=${encodeURIComponent(token)}`;
    await mailer.send(passwordResetMail({ to: user.email, name: user.name, link }));
  }

  /**
   * Works once. The link is checked before any password is hashed, so an anonymous
   * caller without a live link costs no bcrypt work; the row is then locked, checked
   * again and marked used in one transaction. The reset ends every session of the
   * account and revokes its personal API tokens: whoever knew the old password may
   * have made either.
   */
  async confirmPasswordReset(token: string, password: string): Promise<{ sessionsEnded: number; tokensRevoked: number }> {
    const { db, passwords, passwordCost } = this.deps;
    const tokenHash = hashOpaqueToken(token);
    if (!usable(await findResetToken(db, tokenHash))) throw invalidResetLink();
    const hash = await hashPassword(password, passwordCost, passwords);
    return db.transaction(async (tx) => {
      const row = await lockResetToken(tx, tokenHash);
      if (!usable(row)) throw invalidResetLink();
      const user = await findUserById(tx, row.userId);
      if (!user) throw new ApiError(400, 'token_invalid', 'This password-reset link belongs to an account that no longer exists.');
      await updatePasswordHash(tx, user.id, hash);
      await useAllResetTokens(tx, user.id);
      const sessionsEnded = await revokeAllSessions(tx, user.id);
      const tokensRevoked = await revokeAllApiTokens(tx, user.id);
      await writeAudit(tx, {
        groupId: null,
        actorId: user.id,
        accountId: user.id,
        action: 'auth.password_reset',
        subject: user.email,
        details: { sessionsEnded, tokensRevoked },
      });
      return { sessionsEnded, tokensRevoked };
    });
  }
}
