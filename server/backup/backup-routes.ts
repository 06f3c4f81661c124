import { Transform } from 'node:stream';
import { Router } from 'express';
import { signedInUser } from '../auth/authenticate.js';
import type { Db } from '../db/client.js';
import { ApiError } from '../http/error-handler.js';
import { mountRoute } from '../http/mount-route.js';
import { backupGroupRoute, restoreGroupRoute } from '../../shared/api/backup.js';
import { MAX_UPLOAD_BYTES } from './backup-format.js';
import { BackupService } from './backup-service.js';

/**
 * Group backup and restore below /api/groups/:groupId, admins only:
 * GET /backup streams the archive (backup-format.ts); POST /restore takes one as
 * the request body (Content-Type application/gzip) into an empty group.
 */
export function backupRoutes(d: { db: Db }): Router {
  const backups = new BackupService(d.db);
  const router = Router();

  mountRoute(router, backupGroupRoute, async ({ query }, req, res) => {
    const m = req.membership!;
    const members = query.members === 'true';
    await backups.recordDownload(m.groupId, m.groupName, signedInUser(req).id, members);
    res.setHeader('Content-Type', 'application/gzip');
    res.setHeader('Content-Disposition', `attachment; filename="poleward-${m.groupSlug}-${new Date().toISOString().slice(0, 10)}.jsonl.gz"`);
    res.setHeader('Cache-Control', 'no-store');
    // One read-only snapshot, so a run finishing meanwhile cannot leave half of itself in the file.
    await backups.stream(m.groupId, members, res).catch((err) => {
      // The headers are gone: all that can be done is to cut the download short.
      if (res.headersSent) res.destroy(err as Error);
      else throw err;
    });
  });

  mountRoute(router, restoreGroupRoute, async (_input, req) => {
    const type = (req.headers['content-type'] ?? '').split(';')[0]!.trim();
    if (!['application/gzip', 'application/x-gzip', 'application/octet-stream'].includes(type)) {
      throw new ApiError(415, 'unsupported_media_type', 'Send the backup file itself as the request body, with Content-Type application/gzip.');
    }
    const declared = Number(req.headers['content-length'] ?? 0);
    const tooLarge = () => new ApiError(413, 'payload_too_large', `The backup file is larger than the limit of ${MAX_UPLOAD_BYTES / 1024 / 1024} MB.`);
    if (declared > MAX_UPLOAD_BYTES) throw tooLarge();
    let received = 0;
    const cap = new Transform({
      transform(chunk: Buffer, _e, done) {
        received += chunk.length;
        done(received > MAX_UPLOAD_BYTES ? tooLarge() : null, chunk);
      },
    });
    req.on('error', (e) => cap.destroy(e));
    const summary = await backups.restore(req.membership!.groupId, signedInUser(req).id, req.pipe(cap));
    return { restored: summary };
  });

  return router;
}
