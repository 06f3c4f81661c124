// The figures behind the editor's live check and the run launcher, for a graphene model
// (issue 15): the API keeps the honeycomb's own figures (lattice, Dirac cone) instead of
// dropping them, a stored version's figures are derived on the honeycomb, and the run
// estimate warns by the Dirac picture, not by the square lattice's rule.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { figuresOfStored } from '../../server/models/model-figures.js';
import { estimateRun } from '../../server/runs/run-estimate.js';
import { createLab, type Lab } from './lab-fixture.js';
import { signInAs, type SignedIn } from './sign-in-as.js';
import { recordingQueue, startTestApp, type TestApp } from './test-app.js';

/** A closed graphene disk, radius 2 nm, a_CC = 0.142 nm, t = 2.7 eV. */
const flake = {
  name: 'flake',
  spacing: 0.142,
  lattice: { kind: 'honeycomb', hopping: 2.7 },
  grid: { nx: 40, ny: 24 },
  shape: { kind: 'disk', cx: 2.5, cy: 2.6, radius: 2 },
  field: 0,
  leads: [],
};

let app: TestApp;
let lab: Lab;
let designer: SignedIn;

beforeAll(async () => {
  app = await startTestApp({ queue: recordingQueue() });
  lab = await createLab(app.handle.db, ['designer']);
  designer = await signInAs(app, lab.as('designer').email);
});
afterAll(async () => app?.close());

describe('graphene model figures', () => {
  it('the live check answers with the honeycomb, t in meV and the Dirac cone', async () => {
    const res = await designer.post(`/api/groups/${lab.groupId}/models/validate`, { document: flake });
    expect(res.status).toBe(200);
    const d = res.body.derived;
    expect(d.lattice).toBe('honeycomb');
    expect(d.hopping).toBeCloseTo(2700, 9);
    // ħv_F = 3t·a_CC/2 (Castro Neto et al., Rev. Mod. Phys. 81, 109 (2009), §II.A, from memory) = 575.1 meV·nm.
    expect(d.dirac.hbarVelocity).toBeCloseTo(1.5 * 2700 * 0.142, 9);
    expect(d.dirac.energy).toBe(0);
    expect(d.energyCeiling).toBeCloseTo(2700 / 4, 9);
  });

  it('a saved graphene model is filed as a honeycomb model, without an effective mass', async () => {
    const res = await designer.post(`/api/groups/${lab.groupId}/models`, { document: flake });
    expect(res.status).toBe(201);
    expect(res.body.material).toBe('honeycomb');
    expect(res.body.derived.lattice).toBe('honeycomb');
    expect(res.body.document.lattice).toMatchObject({ kind: 'honeycomb', hopping: 2.7 });
  });

  it('a stored version’s figures are the honeycomb’s (the back-fill reads the lattice)', () => {
    const d = figuresOfStored({ ...flake, leads: [{ side: 'left', start: 5, width: 4 }] }, 500);
    expect(d?.lattice).toBe('honeycomb');
    expect(d?.hopping).toBeCloseTo(2700, 9);
    // Honeycomb leads have no closed-form thresholds: none are made up.
    expect(d?.leads[0].thresholds).toEqual([]);
  });

  it('the run estimate warns by the Dirac picture at the window end farthest from E_D', () => {
    const far = estimateRun(flake, { kind: 'transmission', window: { emin: -900, emax: 300, points: 20 } });
    expect(far.warnings.some((w) => /\|E − E_D\| = 900\.0 meV is above t\/4/.test(w))).toBe(true);
    // Above 0.38t = 1030 meV the square rule would ask to refine the grid; graphene is not a discretised continuum.
    const high = estimateRun(flake, { kind: 'transmission', window: { emin: 0, emax: 1200, points: 20 } });
    expect(high.warnings.some((w) => /refine the grid/.test(w))).toBe(false);
    expect(high.warnings.some((w) => /Dirac cone is warped/.test(w))).toBe(true);
  });
});
