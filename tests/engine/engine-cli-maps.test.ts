import { describe, expect, it } from 'vitest';
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';

const dir = mkdtempSync(join(tmpdir(), 'poleward-cli-maps-'));
const dot = {
  name: 'dot',
  spacing: 5,
  material: { effectiveMass: 0.067 },
  grid: { nx: 14, ny: 10 },
  shape: { kind: 'subtract', from: { kind: 'rectangle', x0: 0, y0: 0, width: 70, height: 50 }, remove: [{ kind: 'disk', cx: 45, cy: 30, radius: 7 }] },
  field: 1,
  leads: [
    { side: 'left', start: 2, width: 2, name: 'source' },
    { side: 'right', start: 5, width: 2, name: 'drain' },
  ],
};
const file = join(dir, 'dot.json');
writeFileSync(file, JSON.stringify(dot));

function engine(...args: string[]) {
  const r = spawnSync(process.execPath, ['--import', 'tsx', 'scripts/engine.ts', ...args], { encoding: 'utf8', cwd: process.cwd() });
  return { status: r.status, stdout: r.stdout, stderr: r.stderr };
}

describe('engine command line: current and husimi', () => {
  it('prints the current of a scattering state, whose current into the drain is the transmission', () => {
    const r = engine('current', file, '--energy', '30', '--lead', 'source', '--channel', '1');
    expect(r.status).toBe(0);
    const out = JSON.parse(r.stdout);
    expect(out.unit).toBe('incoming flux');
    expect(out.sites.i.length).toBe(out.density.length);
    expect(out.bonds.current.length).toBe(out.bonds.from.length);
    expect(out.siteVectors.x.length).toBe(out.sites.i.length);
    expect(out.kirchhoffResidual).toBeLessThan(1e-10);
    const t = JSON.parse(engine('transmission', file, '--emin', '30', '--emax', '31', '--points', '2').stdout);
    // One open channel in the source at 30 meV, so the drain gets T(source → drain) of the engine.
    expect(Math.abs(out.leads[1].current - t.transmission[0][0][1])).toBeLessThan(1e-10);
    expect(Math.abs(out.leads[0].current + out.leads[1].current)).toBeLessThan(1e-10);
  });

  it('prints the Husimi map of the pole nearest an energy', () => {
    const r = engine('husimi', file, '--pole-near', '30', '--directions', '24', '--sigma-nm', '12', '--grid-nm', '10');
    expect(r.status).toBe(0);
    const out = JSON.parse(r.stdout);
    expect(out.state.kind).toBe('pole');
    expect(Math.abs(out.state.energy - 30)).toBeLessThan(2);
    expect(out.directions).toHaveLength(24);
    expect(out.sigmaNm).toBe(12);
    expect(out.points.length).toBeGreaterThan(4);
    expect(out.distribution[0]).toHaveLength(24);
    expect(out.angularResolution).toBeCloseTo(1 / (2 * 12 * out.meanWavenumber), 12);
    for (const p of out.peaks) expect(p.share).toBeGreaterThan(0);
  });

  it('prints the valley-resolved Husimi map of a graphene dot (the demo dot G1)', () => {
    const g1 = join(dir, 'g1.json');
    writeFileSync(g1, JSON.stringify(JSON.parse(readFileSync('catalogue/hl-graphene-g1.json', 'utf8')).model));
    const r = engine('husimi', g1, '--energy', '1200', '--lead', 'source', '--channel', '1', '--directions', '24', '--grid-nm', '0.3');
    expect(r.stderr).toBe('');
    expect(r.status).toBe(0);
    const out = JSON.parse(r.stdout);
    expect(out.lattice).toBe('honeycomb');
    expect(out.diracEnergy).toBe(0);
    expect(out.valleys.map((v: { name: string }) => v.name)).toEqual(['K', 'K′']);
    expect(out.points.length).toBeGreaterThan(4);
    out.points.forEach((p: { carrier: number; valleyShare: number; total: number; kineticEnergy: number }, k: number) => {
      expect(p.carrier).toBe(1);
      expect(p.kineticEnergy).toBe(1200);
      const inK = out.valleys[0].distribution[k].reduce((a: number, b: number) => a + b, 0) / 24;
      expect(Math.abs(p.valleyShare - inK / p.total)).toBeLessThan(1e-12);
    });
    // 10 meV is within 1 % of t = 2.7 eV of the Dirac energy on every atom: no direction is defined there.
    const dirac = engine('husimi', g1, '--energy', '10', '--lead', 'source', '--channel', '1');
    expect(dirac.status).toBe(1);
    expect(dirac.stderr).toContain('Dirac energy');
  });

  it('says what is wrong with the state flags', () => {
    const both = engine('current', file, '--pole-near', '30', '--energy', '30');
    expect(both.status).toBe(2);
    expect(both.stderr).toContain('not both');
    const lead = engine('husimi', file, '--energy', '30', '--lead', 'gate', '--channel', '1');
    expect(lead.status).toBe(2);
    expect(lead.stderr).toContain('0 = source, 1 = drain');
    const closed = engine('current', file, '--energy', '30', '--lead', '0', '--channel', '2');
    expect(closed.status).toBe(1);
    expect(closed.stderr).toContain('channel 2 of lead 0 (source) is not open');
  });
});
