import type { EnsembleOutcome, StudyDetail, StudyStepDetail, SweepOutcome } from '../../../../shared/api/studies';

const pole = (energy: number, width: number) => ({
  energy,
  width,
  lifetimePs: 0.658 / width,
  quality: energy / width,
  petermann: 1.02,
  partialWidths: [width / 2, width / 2],
  bound: false,
  nearThreshold: null,
});

/** A finished three-step field sweep of a small dot: two trajectories meeting at step 1 (an avoided crossing); step 2 uncertified. */
export const sampleSweepOutcome: SweepOutcome = {
  kind: 'sweep',
  parameters: [{ path: 'field', values: [0, 0.5, 1] }],
  window: { emin: 1, emax: 10, gammaMax: 1 },
  steps: [0, 1, 2].map((index) => ({
    index,
    values: [index * 0.5],
    status: 'completed',
    certified: index !== 2,
    summary: index !== 2 ? 'certified: 2 poles in 1 piece' : 'not certified: winding number 3, 2 poles found',
    factorisations: 40,
    coveredByContinuation: index > 0,
    poles: [pole(3 + index * 0.2, 0.1), pole(3.6 - index * 0.2, 0.05 + index * 0.02)],
    transmission: [0.1, 0.9 - index * 0.2, 0.3, 0.05],
  })),
  transmission: { energies: [1, 4, 7, 10], from: 'source', into: ['drain'], worstCurrentResidual: 1e-13, budgetExhaustedSteps: [], poleSampledSteps: [] },
  lines: [
    {
      value: null,
      trajectories: [
        {
          id: 0,
          entered: false,
          left: false,
          points: [0, 1, 2].map((step) => ({
            step,
            value: step * 0.5,
            pole: 0,
            energy: 3 + step * 0.2,
            width: 0.1,
            link: step ? ('continuation' as const) : ('start' as const),
            overlap: step ? 0.98 : null,
          })),
        },
        {
          id: 1,
          entered: false,
          left: false,
          points: [0, 1, 2].map((step) => ({
            step,
            value: step * 0.5,
            pole: 1,
            energy: 3.6 - step * 0.2,
            width: 0.05 + step * 0.02,
            link: step ? ('continuation' as const) : ('start' as const),
            overlap: step ? 0.97 : null,
          })),
        },
      ],
      marks: [{ kind: 'avoided-crossing', trajectories: [0, 1], step: 1, distance: 0.2, from: 0, to: 2, petermann: 4.5, widthSums: [0.15, 0.17, 0.19] }],
    },
  ],
  fullSearchFraction: 1 / 3,
  units: { energy: 'meV', width: 'meV', lifetime: 'ps' },
};

const summary = {
  id: '7b0c1f3e-2d4a-4b6c-8e9f-0a1b2c3d4e5f',
  kind: 'sweep' as const,
  name: 'Field sweep of dot A',
  modelId: '5f0c1f3e-2d4a-4b6c-8e9f-0a1b2c3d4e5f',
  modelName: 'Dot A',
  modelVersion: 2,
  stepCount: 3,
  reusedSteps: 0,
  estimateSeconds: 12,
  error: null,
  createdBy: { id: '1a2b3c4d-0000-4000-8000-00000000ada0', name: 'Ada Marlow' },
  createdAt: '2026-12-02T08:00:00.000Z',
};

/** The same study while running: step 0 done, step 1 running, step 2 queued. */
export const runningStudy: StudyDetail = {
  ...summary,
  status: 'running',
  steps: { queued: 1, running: 1, completed: 1, failed: 0, cancelled: 0 },
  finishedAt: null,
  definition: {},
  stepList: [
    { index: 0, values: [0], status: 'completed', attempts: 1, reused: false, seconds: 3.2, worker: 'w1', error: null },
    { index: 1, values: [0.5], status: 'running', attempts: 1, reused: false, seconds: null, worker: 'w1', error: null },
    { index: 2, values: [1], status: 'queued', attempts: 0, reused: false, seconds: null, worker: null, error: null },
  ],
  outcome: null,
};

export const completedStudy: StudyDetail = {
  ...runningStudy,
  status: 'completed',
  steps: { queued: 0, running: 0, completed: 3, failed: 0, cancelled: 0 },
  finishedAt: '2026-12-02T08:01:00.000Z',
  stepList: runningStudy.stepList.map((s) => ({ ...s, status: 'completed' as const, seconds: 3, attempts: 1 })),
  outcome: sampleSweepOutcome,
};

/** Step 1 of the sample sweep as GET .../steps/1 answers: a 3×2 grid of 4 sites, two poles. */
export const sampleStep: StudyStepDetail = {
  index: 1,
  values: [0.5],
  status: 'completed',
  certified: true,
  summary: 'certified: 2 poles in 1 piece',
  document: { field: 0.5 },
  grid: { nx: 3, ny: 2 },
  sites: { i: [0, 1, 2, 1], j: [0, 0, 0, 1] },
  poles: [
    { ...pole(3.2, 0.1), density: [0.1, 0.5, 0.1, 0.3] },
    { ...pole(3.4, 0.07), density: [0.4, 0.1, 0.4, 0.1] },
  ],
};

const sample = (realisation: number, energy: number | null, within: boolean) => ({
  realisation,
  seed: 1000 + realisation,
  followed: energy !== null,
  reason: energy === null ? 'no pole within 0.5 meV with overlap above 0.5' : null,
  pole: energy === null ? null : 0,
  overlap: energy === null ? null : 0.9,
  energy,
  width: energy === null ? null : 0.1,
  quality: energy === null ? null : energy / 0.1,
  certified: energy === null ? null : true,
  withinTolerances: within,
  record: { realisation, seed: 1000 + realisation, jitter: [], roughness: { added: 3, removed: 2, droppedIslands: 0 }, disorderSeeds: [] },
});

/** Four realisations: three followed (two within the tolerances), one not followed. */
export const sampleEnsembleOutcome: EnsembleOutcome = {
  kind: 'ensemble',
  nominal: { certified: true, poles: [pole(3, 0.1)] },
  statistics: {
    nominal: { pole: 0, energy: 3, width: 0.1, quality: 30 },
    samples: [sample(0, 3.01, true), sample(1, 2.98, true), sample(2, 3.2, false), sample(3, null, false)],
    followed: 3,
    notFollowed: 1,
    energy: { count: 3, mean: 3.063, std: 0.1, min: 2.98, max: 3.2, histogram: { edges: [2.98, 3.09, 3.2], counts: [2, 1] } },
    width: { count: 3, mean: 0.1, std: 0, min: 0.1, max: 0.1, histogram: { edges: [0.1, 0.1], counts: [3] } },
    quality: { count: 3, mean: 30.6, std: 1, min: 29.8, max: 32, histogram: { edges: [29.8, 30.9, 32], counts: [2, 1] } },
    sensitivities: [],
    residualSpread: { energy: 0.1, width: 0 },
    yield: { fraction: 0.5, within: 2, total: 4 },
  },
  units: { energy: 'meV', width: 'meV', roughness: 'nm' },
};
