import { Router } from 'express';
import multer from 'multer';
import { z } from 'zod';
import { signedInUser } from '../auth/authenticate.js';
import { requireRole } from '../auth/require-role.js';
import { ApiError } from '../http/error-handler.js';
import { validate } from '../http/validate.js';
import { MAX_CAVITY_SITES } from '../../shared/model/cavity-model.js';
import { maskFromBitmap } from './mask-from-bitmap.js';
import { checkModel } from './model-figures.js';
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

const upload = multer({ storage: multer.memoryStorage(), limits: { fileSize: 8 * 1024 * 1024, files: 1 } });

/** /api/groups/:groupId/models — reading needs membership, writing the designer role. */
export function modelRoutes(models: ModelService): Router {
  const router = Router({ mergeParams: true });

  router.get('/', requireRole(), validate({ query: listQuery }), async (req, res) => {
    res.json(await models.list(req.membership!.groupId, req.valid.query as z.infer<typeof listQuery>));
  });

  router.post('/', requireRole('designer'), validate({ body: documentBody }), async (req, res) => {
    const { document } = req.valid.body as z.infer<typeof documentBody>;
    res.status(201).json(await models.create(req.membership!.groupId, signedInUser(req).id, document));
  });

  router.post('/validate', requireRole(), validate({ body: documentBody }), (req, res) => {
    const { document } = req.valid.body as z.infer<typeof documentBody>;
    const checked = checkModel(document);
    res.json({ ok: true, derived: checked.derived, columns: checked.columns });
  });

  router.post('/mask-from-bitmap', requireRole('designer'), upload.single('file'), validate({ body: bitmapBody }), (req, res) => {
    if (!req.file) {
      throw new ApiError(400, 'validation_failed', 'Attach the drawing as a PNG file in the field "file".', [
        { path: 'file', message: 'missing' },
      ]);
    }
    const { spacingNm, widthNm } = req.valid.body as z.infer<typeof bitmapBody>;
    res.json(maskFromBitmap(req.file.buffer, spacingNm, widthNm, MAX_CAVITY_SITES));
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
    res.json(await models.update(req.membership!.groupId, signedInUser(req).id, modelId, document));
  });

  return router;
}
