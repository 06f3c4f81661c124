// `npm run bench -- --only=leads`: numerical leads (honeycomb ribbons). The threshold search of
// a wide armchair and a wide zigzag lead, one self-energy with its derivative at a complex
// energy, certified pole searches of graphene dots with numerical leads (build and search
// timed apart) and a transmission sweep. Wall and CPU time of this process; the load average goes with every figure.
import { readFileSync } from 'node:fs';
import { cpuUsage } from 'node:process';
import { loadavg } from 'node:os';
import type { CavityModelInput } from '../shared/model/cavity-model';
import { buildCavitySystem, EffectiveHamiltonian } from '../shared/engine/effective-hamiltonian';
import { leadCellOf } from '../shared/engine/lead-cell';
import { leadBandEdges } from '../shared/engine/numerical-lead-bands';
import { NumericalLead } from '../shared/engine/numerical-lead';
import { findPoles } from '../shared/engine/poles';
import { transmissionSweep } from '../shared/engine/transmission';

/** Wall and CPU milliseconds of f. */
function timed<T>(f: () => T): [T, number, number] {
  const c0 = cpuUsage();
  const t0 = performance.now();
  const out = f();
  const wall = performance.now() - t0;
  const c = cpuUsage(c0);
  return [out, wall, (c.user + c.system) / 1000];
}

const ACC = 0.142;
const DX = (Math.sqrt(3) / 2) * ACC;
const DY = 1.5 * ACC;

/** A graphene rectangle covering grid columns 0..nx−1 and rows 0..ny−1 exactly, t = 2.7 eV. */
export function grapheneRectangle(nx: number, ny: number, leads: CavityModelInput['leads']): CavityModelInput {
  return {
    name: `graphene ${nx}×${ny}`,
    spacing: ACC,
    lattice: { kind: 'honeycomb', hopping: 2.7 },
    grid: { nx, ny },
    shape: { kind: 'rectangle', x0: -0.01, y0: -0.01, width: nx * DX, height: ny * DY },
    leads,
  };
}

function leadBuild(side: 'top' | 'left', width: number): Record<string, number | string> {
  const nx = side === 'top' ? width + 4 : 12;
  const ny = side === 'top' ? 8 : width + 4;
  const cell = leadCellOf(grapheneRectangle(nx, ny, [{ side, start: 2, width }]) as never, 0);
  const stats = { solves: 0 };
  const [edges, wall, cpu] = timed(() => leadBandEdges(cell, 128, stats));
  const lead = new NumericalLead({ cell, mouthSize: cell.mouth.length, coupling: cell.coupling }, { edges });
  const e = 0.5 * (edges[edges.length - 2].energy + edges[edges.length - 3].energy);
  // five energies 0.01 meV apart, so that no cached real-axis modes are reused
  const [, sWall, sCpu] = timed(() => {
    for (let k = 0; k < 5; k++) lead.selfEnergyWithDerivative(e + 0.01 * k, -10, lead.sheetAt(e));
  });
  return {
    'cell atoms': cell.size,
    thresholds: edges.length,
    'threshold search wall (ms)': Math.round(wall),
    'threshold search CPU (ms)': Math.round(cpu),
    'Hermitian decompositions': stats.solves,
    'Σ, dΣ/dz at Im z = −10 meV, wall/CPU ms': `${(sWall / 5).toFixed(1)} / ${(sCpu / 5).toFixed(1)}`,
  };
}

function dotSearch(
  doc: CavityModelInput,
  window: { emin: number; emax: number; gammaMax: number },
  sweep?: { emin: number; emax: number; points: number },
): Record<string, number | string> {
  const [system, bWall, bCpu] = timed(() => buildCavitySystem(doc));
  const op = new EffectiveHamiltonian(system);
  const [search, sWall, sCpu] = timed(() => findPoles(op, window));
  const swept: Record<string, string> = {};
  if (sweep) {
    const [, wWall, wCpu] = timed(() => transmissionSweep(op, sweep));
    swept[`transmission, ${sweep.points} energies, wall / CPU (ms)`] = `${Math.round(wWall)} / ${Math.round(wCpu)}`;
  }
  return {
    ...swept,
    atoms: op.n,
    'lead thresholds': system.leads.map((l) => l.numerical?.thresholds.length ?? 0).join(' + '),
    'build wall / CPU (ms)': `${Math.round(bWall)} / ${Math.round(bCpu)}`,
    'pole search wall / CPU (ms)': `${Math.round(sWall)} / ${Math.round(sCpu)}`,
    poles: search.poles.length,
    certified: String(search.certificate.certified),
  };
}

export function benchLeads(): Record<string, Record<string, number | string>> {
  const g1 = JSON.parse(readFileSync(new URL('../catalogue/hl-graphene-g1.json', import.meta.url), 'utf8')) as {
    model: CavityModelInput;
    poleSearch: { emin: number; emax: number; gammaMax: number };
  };
  const out: Record<string, Record<string, number | string>> = {};
  out['armchair lead, 20 dimer lines'] = leadBuild('top', 20);
  out['zigzag lead, 20 chains'] = leadBuild('left', 20);
  out['graphene dot G1 (catalogue/hl-graphene-g1.json, its window)'] = dotSearch(g1.model, g1.poleSearch);
  out['graphene 22×8 rectangle, armchair leads of 20 dimer lines top and bottom'] = dotSearch(
    grapheneRectangle(22, 8, [
      { side: 'bottom', start: 1, width: 20 },
      { side: 'top', start: 1, width: 20 },
    ]),
    { emin: 300, emax: 900, gammaMax: 200 },
    { emin: 100, emax: 2000, points: 30 },
  );
  for (const v of Object.values(out)) v['load average (1 min)'] = loadavg()[0].toFixed(2);
  return out;
}
