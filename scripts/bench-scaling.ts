/**
 * Pole-search time and peak memory against the number of sites, 2,500 to 100,000:
 * the bench rectangle of scripts/bench.ts (GaAs, a = 5 nm, weak disorder, two
 * 10-site leads) at side 50 … 316, with windows scaled to hold a similar number of
 * poles. Each size runs in its own process, so its peak resident memory (maxRSS) is
 * its own; the fitted exponent p is the least-squares slope of log time on log sites.
 *
 * Run: npx tsx scripts/bench-scaling.ts [--sides=50,100,200,316]   (one thread per search)
 *      npx tsx scripts/bench-scaling.ts --one=100                  (one size, JSON line)
 */
import { execFileSync } from 'node:child_process';
import { loadavg } from 'node:os';
import { buildCavitySystem, EffectiveHamiltonian } from '../shared/engine/effective-hamiltonian';
import { findPoles } from '../shared/engine/poles';
import { benchCavity } from './bench-cavity';

interface ScalingRow {
  sites: number;
  seconds: number;
  /** CPU time of the search: on a loaded machine the wall time includes waiting for a core. */
  cpuSeconds: number;
  poles: number;
  certified: boolean;
  factorisations: number;
  maxRssMb: number;
  loadAverage: number;
}

/** One certified search in this process (window between channels 2 and 3, width ∝ 1/sites). */
function searchOnce(side: number): ScalingRow {
  const op = new EffectiveHamiltonian(buildCavitySystem(benchCavity(side)));
  const t = op.hopping;
  const width = 0.027 * t * (10_000 / op.n);
  const c0 = process.cpuUsage();
  const t0 = performance.now();
  const r = findPoles(op, { emin: 0.4 * t, emax: 0.4 * t + width, gammaMax: 2e-3 * t });
  const cpu = process.cpuUsage(c0);
  return {
    sites: op.n,
    seconds: (performance.now() - t0) / 1000,
    cpuSeconds: (cpu.user + cpu.system) / 1e6,
    poles: r.poles.length,
    certified: r.certificate.certified,
    factorisations: r.stats.factorisations,
    maxRssMb: process.resourceUsage().maxRSS / 1024,
    loadAverage: loadavg()[0],
  };
}

/** Least-squares slope of log y against log x. */
export function fittedExponent(x: number[], y: number[]): number {
  const xs = x.map(Math.log);
  const ys = y.map(Math.log);
  const mx = xs.reduce((a, b) => a + b) / xs.length;
  const my = ys.reduce((a, b) => a + b) / ys.length;
  return xs.reduce((s, v, k) => s + (v - mx) * (ys[k] - my), 0) / xs.reduce((s, v) => s + (v - mx) ** 2, 0);
}

/** Runs each size in a child process and returns the printable figures. */
export function benchScaling(sides = [50, 100, 200, 316]): Record<string, number | string> {
  const rows: ScalingRow[] = [];
  for (const side of sides) {
    const line = execFileSync(process.execPath, ['--import', 'tsx', import.meta.filename, `--one=${side}`], {
      encoding: 'utf8',
      maxBuffer: 1 << 20,
    });
    rows.push(JSON.parse(line.trim().split('\n').pop()!) as ScalingRow);
  }
  const figures: Record<string, number | string> = {};
  for (const r of rows) {
    figures[`${r.sites} sites`] =
      `${r.seconds.toFixed(2)} s (CPU ${r.cpuSeconds.toFixed(2)} s), ${r.factorisations} LUs, ${r.poles} poles, ${r.certified ? 'certified' : 'NOT certified'}, ` +
      `peak memory ${r.maxRssMb.toFixed(0)} MB, load ${r.loadAverage.toFixed(1)}`;
  }
  if (rows.length >= 2) {
    figures['fitted exponent (time ∝ sites^p)'] = fittedExponent(
      rows.map((r) => r.sites),
      rows.map((r) => r.seconds),
    );
    figures['fitted exponent on CPU time'] = fittedExponent(
      rows.map((r) => r.sites),
      rows.map((r) => r.cpuSeconds),
    );
  }
  return figures;
}

const one = process.argv.find((a) => a.startsWith('--one='));
if (one) {
  console.log(JSON.stringify(searchOnce(Number(one.slice(6)))));
} else if (process.argv[1]?.endsWith('bench-scaling.ts')) {
  const sides = process.argv
    .find((a) => a.startsWith('--sides='))
    ?.slice(8)
    .split(',')
    .map(Number);
  for (const [k, v] of Object.entries(benchScaling(sides))) console.log(`${k.padEnd(36)} ${typeof v === 'number' ? v.toFixed(3) : v}`);
}
