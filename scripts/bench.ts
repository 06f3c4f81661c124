// `npm run bench`: prints the speed figures of the engine and the catalogue on this
// machine. Nothing here is asserted; compare the figures by eye with the targets in
// DEVELOPERS.md. Sections: --only lu,transmission,sweep,poles,scaling,catalogue,estimate,load,studies,leads (default all).
import { cpus, loadavg } from 'node:os';
import { buildCavitySystem, EffectiveHamiltonian } from '../shared/engine/effective-hamiltonian';
import { findPoles, findPolesWith, poleWorkSetup } from '../shared/engine/poles';
import { PoleThreadPool } from '../server/jobs/pole-pool';
import { benchLu, benchLuReference } from './bench-lu';
import { benchScaling } from './bench-scaling';
import { benchSweep1000, benchTransmission } from './bench-transmission';
import { benchCatalogue } from './bench-catalogue';
import { benchLoad } from './bench-load';
import { benchCavity } from './bench-cavity';
import { benchStudies } from './bench-studies';
import { benchLeads } from './bench-leads';

const only = (process.argv.find((a) => a.startsWith('--only='))?.slice(7) ?? 'lu,transmission,sweep,poles,scaling,catalogue,estimate,load,studies,leads').split(
  ',',
);
const print = (title: string, figures: Record<string, number | string>) => {
  console.log(`\n== ${title}`);
  for (const [k, v] of Object.entries(figures)) console.log(`  ${k.padEnd(40)} ${typeof v === 'number' && !Number.isInteger(v) ? v.toPrecision(4) : v}`);
};

/** A window between the thresholds of channels 2 and 3 of the 10-site leads, scaled so it holds a similar number of poles at every size. */
function benchWindow(t: number, sites: number) {
  const width = 0.027 * t * (10_000 / sites);
  return { emin: 0.4 * t, emax: 0.4 * t + width, gammaMax: 2e-3 * t };
}

function searchOnce(side: number) {
  const op = new EffectiveHamiltonian(buildCavitySystem(benchCavity(side)));
  const window = benchWindow(op.hopping, op.n);
  const t0 = performance.now();
  const c0 = process.cpuUsage();
  const r = findPoles(op, window);
  const c = process.cpuUsage(c0);
  // CPU time too: on a shared machine the wall time includes waiting for a core
  const cpuSeconds = (c.user + c.system) / 1e6;
  return {
    sites: op.n,
    seconds: (performance.now() - t0) / 1000,
    cpuSeconds,
    poles: r.poles.length,
    certified: r.certificate.certified,
    factorisations: r.stats.factorisations,
    window,
  };
}

console.log(
  `Poleward bench on ${cpus().length} × ${cpus()[0]?.model ?? 'cpu'}, load average ${loadavg()
    .map((x) => x.toFixed(1))
    .join(' ')}`,
);
console.log('Targets (half of a SciPy/SuperLU reference on this kind of machine): LU 1.75 / 17–30 / 140 ms at 2,500 / 10,000 / 40,000 sites;');
console.log('1,000-energy sweep at 10,000 sites 23–35 s; certified pole search at 10,000 sites 8.5–11 s.');

if (only.includes('lu')) {
  print('sparse LU of z − H_eff (one thread)', await benchLu());
  print('one LU against SciPy/SuperLU (scripts/lu-reference.py), back to back, min of 3 rounds; target ratio ≤ 0.5', await benchLuReference());
}
if (only.includes('transmission')) print('transmission sweep at 10,000 sites (one thread)', await benchTransmission());
if (only.includes('sweep'))
  print('1,000-energy transmission sweep at 10,000 sites: Schur complement against SciPy/SuperLU per energy, then direct (one thread)', await benchSweep1000());
if (only.includes('poles')) {
  const one = searchOnce(100);
  print('certified pole search at 10,000 sites, one thread', {
    sites: one.sites,
    window: `[${one.window.emin.toFixed(3)}, ${one.window.emax.toFixed(3)}] meV, Γ ≤ ${one.window.gammaMax.toFixed(4)} meV`,
    poles: one.poles,
    certified: one.certified ? 'yes' : 'NO',
    factorisations: one.factorisations,
    seconds: one.seconds,
    'CPU seconds': one.cpuSeconds,
    'load average (1 min) after': loadavg()[0],
  });
  // The same search with its LUs on a pool of two worker threads: one search, one certificate.
  const op = new EffectiveHamiltonian(buildCavitySystem(benchCavity(100)));
  const window = benchWindow(op.hopping, op.n);
  const load = loadavg()[0];
  const t0 = performance.now();
  const pool = await PoleThreadPool.start(benchCavity(100), poleWorkSetup({}), 2);
  const started = (performance.now() - t0) / 1000;
  const c0 = process.cpuUsage();
  const two = await findPolesWith(op, window, {}, pool);
  const poolCpu = process.cpuUsage(c0);
  await pool.close();
  const reference = findPoles(op, window);
  const samePoles =
    two.poles.length === reference.poles.length && two.poles.every((p, k) => Math.abs(p.energy - reference.poles[k].energy) <= 1e-12 * op.hopping);
  print('certified pole search at 10,000 sites, pool of two worker threads (one search, one certificate)', {
    poles: two.poles.length,
    certified: two.certificate.certified ? 'yes' : 'NO',
    'same poles and certificate as one thread': samePoles && two.certificate.certified === reference.certificate.certified ? 'yes' : 'NO',
    factorisations: two.stats.factorisations,
    'search seconds': two.stats.seconds,
    'search CPU seconds (both threads and this one)': (poolCpu.user + poolCpu.system) / 1e6,
    'pool start seconds (threads build their operator)': started,
    'load average (1 min) at start': load,
  });
}
if (only.includes('scaling')) {
  print('pole-search time and peak memory against site count, 2,500–100,000 (windows scaled to hold similar pole counts)', benchScaling());
}
if (only.includes('catalogue')) print('catalogue search with 100,000 resonances, 20 concurrent clients', await benchCatalogue());
if (only.includes('estimate')) {
  // The run estimate (POST /runs/estimate) against measured runs: target within a factor 1.5.
  const { accuracyTable, measureAll } = await import('./calibrate-estimate');
  const { runCostModel } = await import('../server/runs/run-estimate');
  console.log('\n== run estimate against measured CPU time (cost model of server/runs/run-cost-model.json)');
  console.log(accuracyTable(measureAll(), runCostModel()));
}
if (only.includes('studies'))
  print('parameter study: 40-step field sweep of the 2,500-site bench rectangle, whole steps on 1, 2, 4 processes', await benchStudies());
if (only.includes('load')) print('HTTP load on loopback: sign-in, catalogue, resonance, mode image, run launch (20 clients each)', await benchLoad());
if (only.includes('leads')) for (const [title, figures] of Object.entries(benchLeads())) print(`numerical leads: ${title}`, figures);
