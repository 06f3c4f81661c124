// A model, a completed run and a few resonances in a fixture lab, for the fabrication tests.
// The model document is real (a disk with two lead stubs and a gate), so the fabrication
// package can be built from it; the resonance figures are hand-picked.
import type { Db } from '../../server/db/client.js';
import { resonances } from '../../server/db/schema/catalogue.js';
import { cavityModels, modelVersions } from '../../server/db/schema/models.js';
import { runs } from '../../server/db/schema/runs.js';
import type { Lab } from './lab-fixture.js';

/** GaAs, a = 5 nm; a disk of radius 60 nm joined to two lead stubs; a block gate and a Gaussian gate. */
export const fabricationModel = {
  name: 'Fabrication fixture dot',
  spacing: 5,
  material: 'gaas',
  grid: { nx: 30, ny: 30 },
  shape: {
    kind: 'union',
    of: [
      { kind: 'disk', cx: 72.5, cy: 72.5, radius: 60 },
      { kind: 'rectangle', x0: 0, y0: 55, width: 40, height: 40 },
      { kind: 'rectangle', x0: 110, y0: 55, width: 40, height: 40 },
    ],
  },
  potential: [
    { kind: 'block', x0: 50, y0: 0, width: 20, height: 150, value: 2.5 },
    { kind: 'gaussian', cx: 72.5, cy: 110, sigma: 12, amplitude: -1.5 },
  ],
  leads: [
    { side: 'left', start: 11, width: 8, name: 'source' },
    { side: 'right', start: 11, width: 8, name: 'drain' },
  ],
};

interface FixtureResonance {
  energy: number;
  width: number;
}

export async function insertResonances(db: Db, lab: Lab, rows: FixtureResonance[], document: object = fabricationModel) {
  const [model] = await db.insert(cavityModels).values({ groupId: lab.groupId, name: 'Fabrication fixture dot' }).returning();
  const [version] = await db
    .insert(modelVersions)
    .values({
      modelId: model!.id,
      groupId: lab.groupId,
      version: 1,
      document,
      family: 'disk',
      material: 'GaAs',
      effectiveMass: 0.067,
      spacingNm: 5,
      fieldT: 0,
      siteCount: 600,
      leadCount: 2,
      hoppingMeV: 22.75,
      radiusNm: 60,
      keyDimensions: { radius: 60 },
    })
    .returning();
  const [run] = await db
    .insert(runs)
    .values({ groupId: lab.groupId, modelVersionId: version!.id, kind: 'pole-search', status: 'completed', window: { emin: 1, emax: 9 }, thresholds: [2.7] })
    .returning();
  const ids: string[] = [];
  for (const [idx, r] of rows.entries()) {
    const [row] = await db
      .insert(resonances)
      .values({
        groupId: lab.groupId,
        runId: run!.id,
        modelId: model!.id,
        modelVersionId: version!.id,
        idx,
        energy: r.energy,
        width: r.width,
        lifetimePs: 0.6582119569 / r.width,
        quality: r.energy / r.width,
        partialWidths: [
          { lead: 'source', width: r.width / 2 },
          { lead: 'drain', width: r.width / 2 },
        ],
        petermann: 1.01,
        residual: 1e-12,
        bound: false,
        nearThreshold: false,
        overlapping: false,
        details: { sheet: 'physical' },
        modelName: 'Fabrication fixture dot',
        modelVersion: 1,
        family: 'disk',
        material: 'GaAs',
        fieldT: 0,
        spacingNm: 5,
        radiusNm: 60,
      })
      .returning();
    ids.push(row!.id);
  }
  return { ids, modelId: model!.id, modelVersionId: version!.id, runId: run!.id };
}
