import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { buildCavitySystem, EffectiveHamiltonian } from '../../shared/engine/effective-hamiltonian';
import { findPoles, findPolesWith, poleWorkSetup } from '../../shared/engine/poles';
import type { PoleSearchResult } from '../../shared/engine/pole-types';
import type { CavityModelInput } from '../../shared/model/cavity-model';
import { PoleThreadPool } from '../../server/jobs/pole-pool';
import { runPartitioned } from '../../server/jobs/partitioned-run';
import { runInThread } from '../../server/jobs/thread-runner';
import { POOL_MIN_SITES } from '../../server/jobs/engine-task';
import { leadEdgesOf } from '../../shared/engine/numerical-lead-system';

/** A GaAs dot with tunnel barriers and a shifted lead, so the window holds a threshold and several poles. */
const document: CavityModelInput = {
  name: 'pool dot',
  spacing: 5,
  material: 'gaas',
  grid: { nx: 24, ny: 16 },
  shape: { kind: 'rectangle', x0: 0, y0: 0, width: 120, height: 80 },
  potential: [
    { kind: 'block', x0: 5, y0: 0, width: 5, height: 80, value: 25 },
    { kind: 'block', x0: 110, y0: 0, width: 5, height: 80, value: 25 },
  ],
  leads: [
    { side: 'left', start: 4, width: 8, offset: 1.6711 },
    { side: 'right', start: 4, width: 8 },
  ],
};
const window = { emin: 10.5, emax: 13.2, gammaMax: 0.1 };

function expectSameSearch(a: PoleSearchResult, b: PoleSearchResult, t: number): void {
  expect(b.poles.length).toBe(a.poles.length);
  a.poles.forEach((p, k) => {
    const q = b.poles[k];
    expect(Math.abs(q.energy - p.energy)).toBeLessThanOrEqual(1e-12 * t);
    expect(Math.abs(q.width - p.width)).toBeLessThanOrEqual(1e-12 * t);
    expect(q.piece).toBe(p.piece);
    expect(q.nearThreshold?.threshold ?? null).toBe(p.nearThreshold?.threshold ?? null);
  });
  expect(b.certificate.certified).toBe(a.certificate.certified);
  expect(b.certificate.pieces.length).toBe(a.certificate.pieces.length);
  a.certificate.pieces.forEach((p, k) => {
    const q = b.certificate.pieces[k];
    expect(Math.abs(q.emin - p.emin) + Math.abs(q.emax - p.emax)).toBeLessThanOrEqual(1e-12 * t);
    expect([q.windingNumber, q.polesFound, q.certified, q.nodes]).toEqual([p.windingNumber, p.polesFound, p.certified, p.nodes]);
  });
  expect(b.stats.factorisations).toBe(a.stats.factorisations);
}

describe('pole search on a pool of worker threads (issue 9, item 3)', () => {
  const op = new EffectiveHamiltonian(buildCavitySystem(document));
  let pool: PoleThreadPool;
  beforeAll(async () => {
    pool = await PoleThreadPool.start(document, poleWorkSetup({}), 2);
  });
  afterAll(async () => {
    await pool?.close();
  });

  it('gives the same poles and certificate as one thread', async () => {
    const one = findPoles(op, window);
    expect(one.poles.length).toBeGreaterThan(1);
    expect(op.thresholds.some((e) => e > window.emin && e < window.emax)).toBe(true);
    const two = await findPolesWith(op, window, {}, pool);
    expectSameSearch(one, two, op.hopping);
    // modes too: the pool's Newton steps are the same arithmetic
    one.poles.forEach((p, k) => {
      let d = 0;
      for (let i = 0; i < p.mode.length; i++) d = Math.max(d, Math.abs(p.mode[i] - two.poles[k].mode[i]));
      expect(d).toBeLessThan(1e-10);
    });
  });

  it('refuses a pool set up for other probes', async () => {
    await expect(findPolesWith(op, window, { probes: 3 }, pool)).rejects.toThrow(/setup/);
  });

  it('runs a job with two threads as one search with one certificate', async () => {
    // a 50 × 40 rectangle: big enough (POOL_MIN_SITES) for the job to use the pool
    const big: CavityModelInput = {
      name: 'pool rectangle',
      spacing: 5,
      material: 'gaas',
      grid: { nx: 50, ny: 40 },
      shape: { kind: 'rectangle', x0: 0, y0: 0, width: 250, height: 200 },
      potential: [{ kind: 'disorder', strength: 0.5, seed: 5 }],
      leads: [
        { side: 'left', start: 8, width: 6 },
        { side: 'right', start: 25, width: 6 },
      ],
    };
    const bigOp = new EffectiveHamiltonian(buildCavitySystem(big));
    expect(bigOp.n).toBeGreaterThanOrEqual(POOL_MIN_SITES);
    const task = { kind: 'pole-search' as const, document: big, window: { emin: 9, emax: 9.4, gammaMax: 0.05 }, spectrumPoints: 0 };
    const one = await runInThread(task, () => {});
    const two = await runPartitioned(task, 2, () => {});
    expect(two.stats['threads']).toBe(2);
    expect(two.certificate!.pieces.length).toBe(one.certificate!.pieces.length);
    expect(two.certificate!.certified).toBe(one.certificate!.certified);
    expect(two.poles.length).toBe(one.poles.length);
    expect(one.poles.length).toBeGreaterThan(0);
    one.poles.forEach((p, k) => expect(Math.abs(two.poles[k].energy - p.energy)).toBeLessThanOrEqual(1e-12 * bigOp.hopping));
  });

  it('gives the same poles on a graphene dot whose threads get the leads’ band edges instead of searching', async () => {
    // The reference dot G1 (catalogue/hl-graphene-g1.json): zigzag leads, numerical.
    const graphene: CavityModelInput = {
      name: 'pool graphene dot',
      spacing: 0.142,
      lattice: { kind: 'honeycomb', hopping: 2.7, removeDangling: true },
      grid: { nx: 14, ny: 6 },
      shape: { kind: 'rectangle', x0: -0.01, y0: -0.01, width: 1.72, height: 1.27 },
      leads: [
        { side: 'left', start: 1, width: 3, name: 'source' },
        { side: 'right', start: 2, width: 3, name: 'drain' },
      ],
    };
    const system = buildCavitySystem(graphene);
    const edges = leadEdgesOf(system);
    expect(edges.every((e) => e !== null && e.length > 0)).toBe(true);
    const gOp = new EffectiveHamiltonian(system);
    const gWindow = { emin: 200, emax: 2400, gammaMax: 800 };
    const one = findPoles(gOp, gWindow);
    expect(one.poles.length).toBeGreaterThan(1);
    const gPool = await PoleThreadPool.start(graphene, poleWorkSetup({}), 2, edges);
    try {
      expectSameSearch(one, await findPolesWith(gOp, gWindow, {}, gPool), gOp.hopping);
    } finally {
      await gPool.close();
    }
  });
});
