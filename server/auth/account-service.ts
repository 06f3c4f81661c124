import { eq } from 'drizzle-orm';
import { accountActivity } from '../audit/activity.js';
import { writeAudit } from '../audit/audit-log.js';
import type { Db } from '../db/client.js';
import { users } from '../db/schema/users.js';
import { ApiError } from '../http/error-handler.js';
import { hashPassword, verifyPassword } from './password.js';
import type { PasswordHasher } from './password-hasher.js';
import { revokeAllSessions } from './session-repository.js';
import { findUserById, updatePasswordHash } from './user-repository.js';

/** What signed-in people change about their own account: name, password, open sessions. */
export class AccountService {
  constructor(private readonly deps: { db: Db; passwordCost: number; passwords: PasswordHasher }) {}

  /** Sign-ins (and failed ones), sign-outs, resets, tokens, role changes, mail of theirs the operator read. */
  activity(userId: string, limit: number) {
    return accountActivity(this.deps.db, userId, limit);
  }

  async profile(userId: string) {
    const user = await findUserById(this.deps.db, userId);
    if (!user) throw new ApiError(401, 'unauthenticated', 'This account no longer exists.');
    return { id: user.id, email: user.email, name: user.name };
  }

  async rename(userId: string, name: string) {
    return this.deps.db.transaction(async (tx) => {
      const before = await findUserById(tx, userId);
      if (!before) throw new ApiError(401, 'unauthenticated', 'This account no longer exists.');
      const [row] = await tx.update(users).set({ name }).where(eq(users.id, userId)).returning();
      await writeAudit(tx, {
        groupId: null,
        actorId: userId,
        accountId: userId,
        action: 'account.renamed',
        subject: row!.email,
        details: { from: before.name, to: name },
      });
      return { id: row!.id, email: row!.email, name: row!.name };
    });
  }

  /**
   * Checks the current password (bcrypt in a worker thread), then stores the new
   * hash; moving password_changed_at ends every session issued before, so the
   * caller opens a fresh one for this browser afterwards.
   */
  async changePassword(userId: string, currentPassword: string, newPassword: string): Promise<void> {
    const { db, passwords, passwordCost } = this.deps;
    const user = await findUserById(db, userId);
    if (!user) throw new ApiError(401, 'unauthenticated', 'This account no longer exists.');
    if (!(await verifyPassword(currentPassword, user.passwordHash, passwords))) {
      await writeAudit(db, { groupId: null, actorId: userId, accountId: userId, action: 'account.password_change_refused', subject: user.email, details: {} });
      throw new ApiError(400, 'wrong_password', 'The current password is wrong; nothing was changed.', [
        { path: 'currentPassword', message: 'the current password is wrong' },
      ]);
    }
    const hash = await hashPassword(newPassword, passwordCost, passwords);
    await db.transaction(async (tx) => {
      await updatePasswordHash(tx, userId, hash);
      const sessionsEnded = await revokeAllSessions(tx, userId);
      await writeAudit(tx, {
        groupId: null,
        actorId: userId,
        accountId: userId,
        action: 'account.password_changed',
        subject: user.email,
        details: { sessionsEnded },
      });
    });
  }

  /** Ends every browser session of the account, this one included; API tokens stay (they are revoked one by one). */
  async signOutEverywhere(userId: string): Promise<{ sessionsEnded: number }> {
    return this.deps.db.transaction(async (tx) => {
      const user = await findUserById(tx, userId);
      const sessionsEnded = await revokeAllSessions(tx, userId);
      await writeAudit(tx, {
        groupId: null,
        actorId: userId,
        accountId: userId,
        action: 'account.signed_out_everywhere',
        subject: user?.email ?? userId,
        details: { sessionsEnded },
      });
      return { sessionsEnded };
    });
  }
}
