import { writeAudit } from '../audit/audit-log.js';
import type { Db } from '../db/client.js';
import { ApiError } from '../http/error-handler.js';
import { activeApiTokens, insertApiToken, revokeApiToken } from './api-token-repository.js';
import { apiTokenPrefix, hashOpaqueToken, newOpaqueToken } from './opaque-token.js';

/** Personal API tokens: only the hash is stored; the secret is shown once, when created. */
export class ApiTokenService {
  constructor(private readonly db: Db) {}

  async list(userId: string) {
    const rows = await activeApiTokens(this.db, userId);
    return rows.map((t) => ({ id: t.id, name: t.name, createdAt: t.createdAt.toISOString(), lastUsedAt: t.lastUsedAt?.toISOString() ?? null }));
  }

  async create(userId: string, name: string) {
    const token = newOpaqueToken(apiTokenPrefix);
    const row = await this.db.transaction(async (tx) => {
      const created = await insertApiToken(tx, userId, name, hashOpaqueToken(token));
      await writeAudit(tx, { groupId: null, actorId: userId, accountId: userId, action: 'api_token.created', subject: name });
      return created;
    });
    return { id: row.id, name: row.name, token, createdAt: row.createdAt.toISOString() };
  }

  async revoke(userId: string, id: string): Promise<void> {
    await this.db.transaction(async (tx) => {
      const row = await revokeApiToken(tx, userId, id);
      if (!row) throw new ApiError(404, 'not_found', 'You have no active API token with this id.');
      await writeAudit(tx, { groupId: null, actorId: userId, accountId: userId, action: 'api_token.revoked', subject: row.name });
    });
  }
}
