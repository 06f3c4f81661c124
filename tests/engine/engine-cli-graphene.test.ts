// The engine command line on a graphene dot with leads (catalogue/hl-graphene-g1.json) and on a
// square model with the field in the leads: the same commands, flags and JSON shape as before.
import { describe, expect, it } from 'vitest';
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { buildCavitySystem, EffectiveHamiltonian } from '../../shared/engine/effective-hamiltonian';
import { findPoles } from '../../shared/engine/poles';

const dot = 'catalogue/hl-graphene-g1.json';
const device = JSON.parse(readFileSync(dot, 'utf8')) as { model: unknown; poleSearch: { emin: number; emax: number; gammaMax: number } };
const dir = mkdtempSync(join(tmpdir(), 'poleward-cli-graphene-'));
const model = join(dir, 'g1.json');
writeFileSync(model, JSON.stringify(device.model));
const hall = join(dir, 'hall.json');
writeFileSync(
  hall,
  JSON.stringify({
    name: 'hall bar',
    spacing: 5,
    material: 'gaas',
    grid: { nx: 12, ny: 16 },
    shape: { kind: 'rectangle', x0: 0, y0: 0, width: 60, height: 80 },
    field: 3.3,
    fieldInLeads: true,
    leads: [
      { side: 'left', start: 0, width: 16 },
      { side: 'right', start: 0, width: 16 },
    ],
  }),
);

function engine(...args: string[]) {
  const r = spawnSync(process.execPath, ['--import', 'tsx', 'scripts/engine.ts', ...args], { encoding: 'utf8', cwd: process.cwd() });
  if (r.status !== 0) throw new Error(`engine ${args.join(' ')} exited with ${r.status}: ${r.stderr}`);
  return JSON.parse(r.stdout);
}

describe('engine command line on graphene with leads and with the field in the leads', () => {
  it('info lists the lattice, the leads’ channel ranges and the band edges as thresholds', () => {
    const out = engine('info', model, '--energy', '800');
    expect(out.lattice).toBe('honeycomb');
    expect(out.leads).toHaveLength(2);
    for (const l of out.leads) {
      expect(l.thresholds.length).toBeGreaterThan(0);
      for (const r of l.thresholds) expect(r.closes).toBeGreaterThan(r.opens);
    }
    expect(out.thresholds.length).toBeGreaterThan(0);
    expect(out.validity.energy).toBe(800);
  });

  it('poles prints the certified poles the engine finds, with positions beside the modes', () => {
    const { emin, emax, gammaMax } = device.poleSearch;
    const out = engine('poles', model, '--emin', String(emin), '--emax', String(emax), '--gmax', String(gammaMax), '--modes');
    const direct = findPoles(new EffectiveHamiltonian(buildCavitySystem(device.model)), { emin, emax, gammaMax });
    expect(out.certificate.certified).toBe(true);
    expect(out.poles.map((p: { energy: number }) => p.energy)).toEqual(direct.poles.map((p) => p.energy));
    expect(out.units.energy).toBe('meV');
    expect(out.lattice).toBe('honeycomb');
    expect(out.positions.x).toHaveLength(out.poles[0].mode.length / 2);
    expect(out.sites.i).toHaveLength(out.poles[0].mode.length / 2);
  });

  it('transmission and closed answer in their usual shape, conserving current', () => {
    const out = engine('transmission', model, '--emin', '-1500', '--emax', '1500', '--points', '6');
    expect(out.energies).toHaveLength(6);
    expect(out.leads).toEqual([
      { name: 'source', side: 'left', width: 3 },
      { name: 'drain', side: 'right', width: 3 },
    ]);
    for (const c of out.channels) expect(c).toEqual([1, 1]);
    expect(out.currentResidual).toBeLessThan(1e-10);
    expect(out.unitarityResidual).toBeLessThan(1e-10);
    // E = 0 exactly: a band edge of the zigzag leads, where their modes coalesce. It is answered
    // (from just below it); the flake's zero modes make G ill-conditioned there, so the
    // residuals are those of rounding amplified by them.
    const dirac = engine('transmission', model, '--emin', '-1500', '--emax', '1500', '--points', '3');
    expect(dirac.energies[1]).toBe(0);
    expect(dirac.channels[1]).toEqual([1, 1]);
    expect(dirac.currentResidual).toBeLessThan(1e-6);
    const closed = engine('closed', model, '--target', '300', '--count', '3');
    expect(closed.energies).toHaveLength(3);
  });

  it('a square Hall bar with fieldInLeads: Landau-level thresholds and whole transmissions', () => {
    const info = engine('info', hall);
    expect(info.leads[0].thresholds.length).toBeGreaterThan(0);
    const t = info.hopping;
    // ħω_c = 4πφt, φ = B·a²/(h/e): the levels sit at ħω_c(n + ½), so E = ħω_c and 2ħω_c lie
    // above one and two of them (Datta 1995, ch. 4).
    const hw = 4 * Math.PI * ((3.3 * 25) / 4135.667696) * t;
    const out = engine('transmission', hall, '--emin', String(hw), '--emax', String(2 * hw), '--points', '2');
    expect(out.channels).toEqual([
      [1, 1],
      [2, 2],
    ]);
    expect(Math.abs(out.transmission[0][0][1] - 1)).toBeLessThan(1e-8);
    expect(Math.abs(out.transmission[1][0][1] - 2)).toBeLessThan(1e-8);
  });
});
