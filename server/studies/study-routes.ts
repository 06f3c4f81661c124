/** /api/groups/:groupId/studies: thin handlers over StudyService, declared in shared/api/studies.ts. */
import { Router } from 'express';
import {
  cancelStudyRoute,
  createStudyRoute,
  exportStudyRoute,
  listStudiesRoute,
  saveStudyStepRoute,
  studyDetailRoute,
  studyEstimateRoute,
  studyStepRoute,
} from '../../shared/api/studies.js';
import { signedInUser } from '../auth/authenticate.js';
import { clientGone } from '../http/client-gone.js';
import { mountRoute, withStatus } from '../http/mount-route.js';
import type { StudyService } from './study-service.js';

function csvCell(v: string | number | boolean | null): string {
  if (v === null) return '';
  const s = String(v);
  return /[",\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}

export function studyRoutes(service: StudyService): Router {
  const router = Router();
  mountRoute(router, studyEstimateRoute, ({ params, body }, _req, res) => service.estimate(params.groupId, body, clientGone(res)));
  mountRoute(router, createStudyRoute, ({ params, body }, req, res) => service.create(params.groupId, signedInUser(req).id, body, clientGone(res)) as never);
  mountRoute(router, listStudiesRoute, ({ params, query }) => service.list(params.groupId, query.page, query.pageSize) as never);
  mountRoute(router, studyDetailRoute, ({ params }) => service.detail(params.groupId, params.studyId) as never);
  mountRoute(router, cancelStudyRoute, async ({ params }, req) => (await service.cancel(params.groupId, signedInUser(req).id, params.studyId)) as never);
  mountRoute(router, studyStepRoute, ({ params }) => service.step(params.groupId, params.studyId, Number(params.index)) as never);
  mountRoute(router, saveStudyStepRoute, ({ params }, req, res) =>
    service.save(params.groupId, signedInUser(req).id, params.studyId, Number(params.index), clientGone(res)),
  );
  mountRoute(router, exportStudyRoute, async ({ params, query }, _req, res) => {
    const out = await service.exportRows(params.groupId, params.studyId, query.table);
    const name = `study-${params.studyId.slice(0, 8)}${query.table === 'transmission' ? '-transmission' : ''}`;
    if (query.format === 'json') {
      res.setHeader('Content-Disposition', `attachment; filename="${name}.json"`);
      res.type('application/json').send(JSON.stringify(out.json));
      return;
    }
    // Where a figure can mislead, the export says so in its first lines.
    const notes = [
      '# Poleward study export. Energies and widths in meV.',
      '# Rows of uncertified steps (certified=false) may miss poles; see docs/physics-model.md.',
      ...out.notes,
    ];
    res.setHeader('Content-Disposition', `attachment; filename="${name}.csv"`);
    res.type('text/csv').send([...notes, out.header.join(','), ...out.rows.map((r) => r.map(csvCell).join(','))].join('\n') + '\n');
  });
  void withStatus;
  return router;
}
