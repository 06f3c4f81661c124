/** A group's whole data as one archive, and its restore into an empty group. */
import * as z from 'zod';
import { groupParams } from './fields.js';
import { declareRoute, json, media } from './route.js';

export const backupQuery = z.object({
  members: z.enum(['true', 'false'], { error: 'must be true or false' }).default('true'),
});

export const restoreSummarySchema = z.object({ restored: z.record(z.string(), z.number().int()) }).meta({ id: 'RestoreSummary' });
export type RestoreSummary = z.infer<typeof restoreSummarySchema>;

export const backupGroupRoute = declareRoute({
  id: 'backupGroup',
  method: 'get',
  path: '/groups/{groupId}/backup',
  tag: 'groups',
  summary: "The group's whole data as one archive (gzip'd JSON lines)",
  access: 'admin',
  notes:
    'Models with every version, runs, spectra, resonances with tags and notes, mode vectors and images, and the member list unless members=false. One record per line, header first, `end` with the counts last; see docs/api.md. Streamed from one read-only snapshot.',
  params: groupParams,
  query: backupQuery,
  answer: media(200, 'application/gzip', 'application/gzip attachment poleward-<slug>-<date>.jsonl.gz', z.string().meta({ format: 'binary' })),
});

export const restoreGroupRoute = declareRoute({
  id: 'restoreGroup',
  method: 'post',
  path: '/groups/{groupId}/restore',
  tag: 'groups',
  summary: 'Restore a group backup into this empty group',
  access: 'admin',
  notes:
    'The body is the archive itself (Content-Type application/gzip). Everything is validated before anything is written, then written in one transaction with new ids; a bad archive is refused whole.',
  params: groupParams,
  rawBody: { mediaType: 'application/gzip', description: 'A backup archive of GET /backup' },
  answer: json(201, 'What was restored (record counts)', restoreSummarySchema),
  errors: {
    400: 'invalid_backup: issues name the line, record type and field',
    409: 'group_not_empty: restore only into a group with no models and no runs',
    413: 'payload_too_large / backup_too_large',
    415: 'unsupported_media_type: send the file with Content-Type application/gzip',
  },
});
