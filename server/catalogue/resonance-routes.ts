import { Router, type Request } from 'express';
import { z } from 'zod';
import { signedInUser } from '../auth/authenticate.js';
import { requireRole } from '../auth/require-role.js';
import { validate } from '../http/validate.js';
import { noNul, tagSchema } from './catalogue-query.js';
import { resonanceNotFound, type CatalogueService } from './catalogue-service.js';

const uuidPattern = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

export const labelBody = z
  .strictObject({
    tags: z
      .array(tagSchema, { error: 'must be a list of tags' })
      .max(20, 'at most 20 tags')
      .transform((tags) => [...new Set(tags)])
      .optional(),
    notes: z
      .string({ error: 'must be text' })
      .max(4000, 'must be at most 4000 characters')
      .regex(noNul, 'must not contain NUL characters')
      .optional(),
  })
  .refine((b) => b.tags !== undefined || b.notes !== undefined, { message: 'send tags, notes or both' });

export const imageQuery = z.object({
  size: z.enum(['thumb', 'full'], { error: 'must be thumb or full' }).default('thumb'),
});

/** A malformed id cannot be one of the group's resonances: 404 like any other stranger's id. */
function resonanceId(req: Request): string {
  const id = req.params.id;
  if (typeof id !== 'string' || !uuidPattern.test(id)) throw resonanceNotFound();
  return id.toLowerCase();
}

/** Stored ETags may or may not carry quotes; the header always does (RFC 9110 §8.8.3). */
function quotedEtag(etag: string): string {
  return etag.startsWith('"') || etag.startsWith('W/"') ? etag : `"${etag}"`;
}

/** If-None-Match → the ETags the caller holds, in both quoted and bare spelling; '*' matches any image. */
function heldEtags(header: string | undefined): { tags: string[]; any: boolean } {
  if (!header) return { tags: [], any: false };
  const tags: string[] = [];
  let any = false;
  for (const part of header.split(',')) {
    const t = part.trim().replace(/^W\//, '');
    if (t === '*') any = true;
    else if (t.length > 0) tags.push(t, t.replace(/^"(.*)"$/, '$1'), `W/${t}`);
  }
  return { tags: [...new Set(tags)].slice(0, 30), any };
}

/** /api/groups/:groupId/resonances/:id — detail, tags and notes, mode images. */
export function resonanceRoutes(service: CatalogueService): Router {
  const router = Router({ mergeParams: true });

  router.get('/resonances/:id', requireRole(), async (req, res) => {
    res.json(await service.detail(req.membership!.groupId, resonanceId(req)));
  });

  router.patch('/resonances/:id', requireRole('designer'), validate({ body: labelBody }), async (req, res) => {
    const id = resonanceId(req);
    const change = req.valid.body as z.infer<typeof labelBody>;
    res.json(await service.label(req.membership!.groupId, signedInUser(req).id, id, change));
  });

  router.get('/resonances/:id/mode.png', requireRole(), validate({ query: imageQuery }), async (req, res) => {
    const id = resonanceId(req);
    const { size } = req.valid.query as z.infer<typeof imageQuery>;
    const held = heldEtags(req.get('if-none-match'));
    const image = await service.modeImage(req.membership!.groupId, id, size, held.tags);
    // Private: the image belongs to one group; immutable: a re-rendered image gets a new ETag.
    res.setHeader('Cache-Control', 'private, max-age=31536000, immutable');
    res.setHeader('ETag', quotedEtag(image.etag));
    if (image.png === null || held.any) {
      res.status(304).end();
      return;
    }
    res.type('image/png').send(image.png);
  });

  return router;
}
