import { Router } from 'express';
import { z } from 'zod';
import { signedInUser } from '../auth/authenticate.js';
import { requireRole } from '../auth/require-role.js';
import { ApiError } from '../http/error-handler.js';
import { clientGone } from '../http/client-gone.js';
import { validate } from '../http/validate.js';
import { MAX_CAVITY_SITES } from '../../shared/model/cavity-model.js';
import type { Compute } from '../compute/compute-pool.js';
import { drawingUpload } from './drawing-upload.js';
import { checkDrawingHeader } from './mask-from-bitmap.js';
import type { ModelService } from './model-service.js';

export const listQuery = z.object({
  search: z.string().max(200).optional(),
  family: z.string().max(40).optional(),
  page: z.coerce.number().int().min(1).default(1),
  pageSize: z.coerce.number().int().min(1).max(200).default(25),
});
export const modelParams = z.object({ groupId: z.uuid(), modelId: z.uuid() });
export const versionParams = modelParams.extend({ version: z.coerce.number().int().min(1) });
export const documentBody = z.object({ document: z.unknown().refine((d) => d !== undefined, 'the model document is missing') });
export const bitmapBody = z.object({
  spacingNm: z.coerce.number().positive().max(1000),
  widthNm: z.coerce.number().positive().max(1e6),
});

/**
 * /api/groups/:groupId/models — reading needs membership, writing the designer role.
 * Every rasterisation (validate, create, edit, drawing to mask) runs in the compute pool.
 */
export function modelRoutes(models: ModelService, compute: Compute): Router {
  const router = Router({ mergeParams: true });

  router.get('/', requireRole(), validate({ query: listQuery }), async (req, res) => {
    res.json(await models.list(req.membership!.groupId, req.valid.query as z.infer<typeof listQuery>));
  });

  router.post('/', requireRole('designer'), validate({ body: documentBody }), async (req, res) => {
    const { document } = req.valid.body as z.infer<typeof documentBody>;
    res.status(201).json(await models.create(req.membership!.groupId, signedInUser(req).id, document, null, clientGone(res)));
  });

  router.post('/validate', requireRole(), validate({ body: documentBody }), async (req, res) => {
    const { document } = req.valid.body as z.infer<typeof documentBody>;
    const checked = await models.check(document, clientGone(res));
    res.json({ ok: true, derived: checked.derived, columns: checked.columns });
  });

  router.post('/mask-from-bitmap', requireRole('designer'), drawingUpload, validate({ body: bitmapBody }), async (req, res) => {
    if (!req.file) {
      throw new ApiError(400, 'validation_failed', 'Attach the drawing as a PNG file in the multipart field "file".', [
        { path: 'file', message: 'missing' },
      ]);
    }
    // The header is read here (no decoding), so a bomb is refused before it reaches a thread.
    checkDrawingHeader(req.file.buffer);
    const { spacingNm, widthNm } = req.valid.body as z.infer<typeof bitmapBody>;
    const file = new Uint8Array(req.file.buffer);
    res.json(await compute.run({ kind: 'mask-from-bitmap', file, spacingNm, widthNm, maxSites: MAX_CAVITY_SITES }, clientGone(res)));
  });

  router.get('/:modelId', requireRole(), validate({ params: modelParams }), async (req, res) => {
    const { modelId } = req.valid.params as z.infer<typeof modelParams>;
    res.json(await models.detail(req.membership!.groupId, modelId));
  });

  router.get('/:modelId/versions/:version', requireRole(), validate({ params: versionParams }), async (req, res) => {
    const { modelId, version } = req.valid.params as z.infer<typeof versionParams>;
    res.json(await models.version(req.membership!.groupId, modelId, version));
  });

  router.put('/:modelId', requireRole('designer'), validate({ params: modelParams, body: documentBody }), async (req, res) => {
    const { modelId } = req.valid.params as z.infer<typeof modelParams>;
    const { document } = req.valid.body as z.infer<typeof documentBody>;
    res.json(await models.update(req.membership!.groupId, signedInUser(req).id, modelId, document, clientGone(res)));
  });

  return router;
}
