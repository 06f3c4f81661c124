import { writeAudit } from '../audit/audit-log.js';
import { findUserByEmail } from '../auth/user-repository.js';
import type { Db } from '../db/client.js';
import { ApiError } from '../http/error-handler.js';
import { findOutboxMessage, recentOutboxMessages } from './outbox-repository.js';

/** The stand-in's received mail for the site operator; every list and read is recorded first. */
export class OutboxService {
  constructor(private readonly db: Db) {}

  async list(operatorId: string) {
    const messages = await recentOutboxMessages(this.db);
    await writeAudit(this.db, { groupId: null, actorId: operatorId, accountId: operatorId, action: 'outbox.listed', subject: `${messages.length} messages` });
    return messages;
  }

  async read(operatorId: string, id: string) {
    const message = await findOutboxMessage(this.db, id);
    if (!message) throw new ApiError(404, 'not_found', 'No such message in the outbox.');
    const recipient = await findUserByEmail(this.db, message.to);
    // Recorded before the answer, and a failure to record refuses the read: no unrecorded reads.
    await writeAudit(this.db, {
      groupId: null,
      actorId: operatorId,
      accountId: recipient?.id ?? null,
      action: 'outbox.read',
      subject: message.subject,
      details: { messageId: id, to: message.to },
    });
    return message;
  }
}
