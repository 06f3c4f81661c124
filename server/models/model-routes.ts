import { Router } from 'express';
import {
  checkModelRoute,
  createModelRoute,
  getModelRoute,
  getModelVersionRoute,
  listModelsRoute,
  maskFromBitmapRoute,
  updateModelRoute,
} from '../../shared/api/models.js';
import { MAX_CAVITY_SITES } from '../../shared/model/cavity-model.js';
import { signedInUser } from '../auth/authenticate.js';
import type { Compute } from '../compute/compute-pool.js';
import { clientGone } from '../http/client-gone.js';
import { ApiError } from '../http/error-handler.js';
import { mountRoute } from '../http/mount-route.js';
import { drawingUpload } from './drawing-upload.js';
import { checkDrawingHeader } from './mask-from-bitmap.js';
import type { ModelService } from './model-service.js';

/**
 * /api/groups/:groupId/models — reading needs membership, writing the designer role.
 * Every rasterisation (validate, create, edit, drawing to mask) runs in the compute pool.
 */
export function modelRoutes(models: ModelService, compute: Compute): Router {
  const router = Router();

  mountRoute(router, listModelsRoute, ({ query }, req) => models.list(req.membership!.groupId, query));

  mountRoute(router, createModelRoute, ({ body }, req, res) =>
    models.create(req.membership!.groupId, signedInUser(req).id, body.document, null, clientGone(res)),
  );

  mountRoute(router, checkModelRoute, async ({ body }, _req, res) => {
    const checked = await models.check(body.document, clientGone(res));
    return { ok: true as const, derived: checked.derived, columns: checked.columns };
  });

  mountRoute(
    router,
    maskFromBitmapRoute,
    async ({ body }, req, res) => {
      if (!req.file) {
        throw new ApiError(400, 'validation_failed', 'Attach the drawing as a PNG file in the multipart field "file".', [{ path: 'file', message: 'missing' }]);
      }
      // The header is read here (no decoding), so a bomb is refused before it reaches a thread.
      checkDrawingHeader(req.file.buffer);
      const file = new Uint8Array(req.file.buffer);
      return compute.run({ kind: 'mask-from-bitmap', file, spacingNm: body.spacingNm, widthNm: body.widthNm, maxSites: MAX_CAVITY_SITES }, clientGone(res));
    },
    { before: [drawingUpload] },
  );

  mountRoute(router, getModelRoute, ({ params }, req) => models.detail(req.membership!.groupId, params.modelId));

  mountRoute(router, getModelVersionRoute, ({ params }, req) => models.version(req.membership!.groupId, params.modelId, params.version));

  mountRoute(router, updateModelRoute, ({ params, body }, req, res) =>
    models.update(req.membership!.groupId, signedInUser(req).id, params.modelId, body.document, clientGone(res)),
  );

  return router;
}
