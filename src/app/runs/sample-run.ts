import type { Run } from './runs-api';

/** A running pole search as the API lists it, for specs; vary it with a spread. */
export const sampleRun: Run = {
  id: 'r1',
  kind: 'pole-search',
  status: 'running',
  progress: { stage: 'contour', fraction: 0.1 },
  window: { emin: 1, emax: 5, gammaMax: 0.5 },
  modelId: 'm1',
  modelName: 'Dot A',
  modelVersion: 2,
  createdBy: { id: 'u1', name: 'Ada' },
  createdAt: '2025-01-01T10:00:00Z',
  startedAt: '2025-01-01T10:00:01Z',
  finishedAt: null,
  attempts: 1,
  error: null,
  engineVersion: '0.1.0',
  resonanceCount: null,
  certificate: null,
};
