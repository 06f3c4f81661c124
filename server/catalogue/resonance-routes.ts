import { Router } from 'express';
import { getResonanceRoute, labelResonanceRoute, modeImageRoute } from '../../shared/api/catalogue.js';
import { signedInUser } from '../auth/authenticate.js';
import { mountRoute } from '../http/mount-route.js';
import { resonanceNotFound, type CatalogueService } from './catalogue-service.js';

const uuidPattern = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

/** A malformed id cannot be one of the group's resonances: 404 like any other stranger's id. */
export function resonanceId(id: string): string {
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
  const router = Router();

  mountRoute(router, getResonanceRoute, ({ params }, req) => service.detail(req.membership!.groupId, resonanceId(params.id)));

  mountRoute(router, labelResonanceRoute, ({ params, body }, req) =>
    service.label(req.membership!.groupId, signedInUser(req).id, resonanceId(params.id), body),
  );

  mountRoute(router, modeImageRoute, async ({ params, query }, req, res) => {
    const id = resonanceId(params.id);
    const held = heldEtags(req.get('if-none-match'));
    const image = await service.modeImage(req.membership!.groupId, id, query.size, held.tags);
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
