import { accountActivity } from '../audit/activity.js';
import type { Db } from '../db/client.js';

/** What concerns the signed-in person's own account. */
export class AccountService {
  constructor(private readonly db: Db) {}

  /** Sign-ins (and failed ones), sign-outs, resets, tokens, role changes, mail of theirs the operator read. */
  activity(userId: string, limit: number) {
    return accountActivity(this.db, userId, limit);
  }
}
