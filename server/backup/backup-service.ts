import type { Readable, Writable } from 'node:stream';
import { pipeline } from 'node:stream/promises';
import { writeAudit } from '../audit/audit-log.js';
import type { Db } from '../db/client.js';
import { groupBackupStream } from './group-backup.js';
import { readBackup, restoreGroup, type RestoredCounts } from './group-restore.js';

/** Group backup (an archive streamed from one snapshot) and restore into an empty group. */
export class BackupService {
  constructor(private readonly db: Db) {}

  /** Recorded before the first byte goes out. */
  async recordDownload(groupId: string, groupName: string, actorId: string, members: boolean): Promise<void> {
    await writeAudit(this.db, { groupId, actorId, action: 'group.backup_downloaded', subject: groupName, details: { members } });
  }

  /** Streams the archive into `out`, read in one repeatable-read snapshot. */
  async stream(groupId: string, members: boolean, out: Writable): Promise<void> {
    await this.db.transaction((tx) => pipeline(groupBackupStream(tx, groupId, members), out), { isolationLevel: 'repeatable read', accessMode: 'read only' });
  }

  /** Reads and checks the whole archive, then writes it in one transaction (nothing on a refusal). */
  async restore(groupId: string, actorId: string, archive: Readable): Promise<RestoredCounts> {
    return restoreGroup(this.db, groupId, actorId, await readBackup(archive));
  }
}
