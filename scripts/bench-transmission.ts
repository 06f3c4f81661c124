/**
 * Transmission sweep speed at 10,000 sites: a 100×100 GaAs rectangle (a = 5 nm) with
 * a 10-site lead on the left and right; energies per second on one thread, for a
 * uniform sweep (no refinement) reusing one LU analysis. Prints figures only.
 *
 *   npx tsx scripts/bench-transmission.ts
 *   npx tsx scripts/bench-transmission.ts --sweep [--side=100] [--points=1000] [--spectral]
 */
import { buildCavitySystem, EffectiveHamiltonian } from '../shared/engine/effective-hamiltonian';
import { transmissionSweep } from '../shared/engine/transmission';
import { largestDifference } from '../shared/engine/mouth-interpolation';
import { execFileSync } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { loadavg, tmpdir } from 'node:os';
import { join } from 'node:path';
import { referenceAvailable, writeMatrix } from './bench-lu';
import type { CavityModelInput } from '../shared/model/cavity-model';

export function rectangleModel(side: number): CavityModelInput {
  return {
    name: `bench rectangle ${side}×${side}`,
    spacing: 5,
    material: 'gaas',
    grid: { nx: side, ny: side },
    shape: { kind: 'rectangle', x0: 0, y0: 0, width: 5 * side, height: 5 * side },
    leads: [
      { side: 'left', start: Math.round(side * 0.2), width: 10 },
      { side: 'right', start: Math.round(side * 0.65), width: 10 },
    ],
  };
}

export async function benchTransmission(points = 200): Promise<Record<string, number>> {
  const op = new EffectiveHamiltonian(buildCavitySystem(rectangleModel(100)));
  const t = op.hopping;
  const started = performance.now();
  const sweep = transmissionSweep(op, { emin: 0.05 * t, emax: 0.45 * t, points });
  const seconds = (performance.now() - started) / 1000;
  const figures = {
    sites: op.n,
    energies: sweep.points.length,
    seconds,
    energiesPerSecond: sweep.points.length / seconds,
    projected1000EnergySweepSeconds: (1000 * seconds) / sweep.points.length,
    worstCurrentResidual: sweep.worstCurrentResidual,
  };
  return figures;
}

/**
 * SciPy/SuperLU's time for one energy of a sweep (factorisation of T(E) plus a solve
 * with the open channels' right-hand sides), by scripts/lu-reference.py --solve, at
 * `count` energies spread over the window; returns the mean (ms) per energy, or null
 * when python3 with scipy is missing.
 */
function referencePerEnergy(op: EffectiveHamiltonian, energies: number[], dir: string): { wall: number; cpu: number } | null {
  if (!referenceAvailable()) return null;
  const values = new Float64Array(2 * op.rowIdx.length);
  let total = 0;
  let cpu = 0;
  for (const [k, E] of energies.entries()) {
    op.assemble({ re: E, im: 0 }, op.sheetAt(E), values);
    const file = join(dir, `sweep-${k}.bin`);
    writeMatrix(file, { n: op.n, colPtr: op.colPtr, rowIdx: op.rowIdx, values });
    const nrhs = Math.max(1, op.couplingColumns(E).count);
    // min of 3 calls per energy: wall times at high load scatter by 3× from call to call
    const line = execFileSync('python3', [join(import.meta.dirname, 'lu-reference.py'), `--solve=${nrhs}`, '3', file], { encoding: 'utf8' });
    const r = JSON.parse(line.trim().split('\n').pop()!) as { minMs: number; minCpuMs: number };
    total += r.minMs;
    cpu += r.minCpuMs;
  }
  return { wall: total / energies.length, cpu: cpu / energies.length };
}

/**
 * A 1,000-energy sweep at 10,000 sites: the product's sweep (by default G on the mouths from
 * the closed cavity's Schur complement, mouth-schur.ts) against the reference (one SuperLU
 * factorisation and solve per energy, timed at 20 energies before and 20 after the product's
 * run and scaled to 1,000, so that load from elsewhere hits both alike), then the direct
 * sweep (one complex LU and solves per energy, method 'direct') for the largest |ΔT| over
 * every energy; with `spectral`, the spectral sweep (mouth-spectral.ts) too. Each timed
 * sweep includes its symbolic analysis; a short untimed sweep of each kind runs first.
 */
export async function benchSweep1000(points = 1000, side = 100, spectral = false): Promise<Record<string, number | string>> {
  const op = new EffectiveHamiltonian(buildCavitySystem(rectangleModel(side)));
  const t = op.hopping;
  const request = { emin: 0.05 * t, emax: 0.45 * t, points };
  const dir = mkdtempSync(join(tmpdir(), 'poleward-sweep-'));
  const out: Record<string, number | string> = { sites: op.n, energies: points };
  try {
    const sample = (shift: number) => Array.from({ length: 20 }, (_, k) => request.emin + ((request.emax - request.emin) * (k + shift)) / 20);
    const loads = [loadavg()[0]];
    const cpuSeconds = (c0: NodeJS.CpuUsage) => {
      const c = process.cpuUsage(c0);
      return (c.user + c.system) / 1e6;
    };
    const timed = <T>(run: () => T): { result: T; wall: number; cpu: number } => {
      const started = performance.now();
      const c0 = process.cpuUsage();
      const result = run();
      return { result, wall: (performance.now() - started) / 1000, cpu: cpuSeconds(c0) };
    };
    // Untimed warm-up of both sweeps (JIT, the WebAssembly modules' optimising tier), as the
    // reference script makes one untimed call first; each timed sweep still analyses its pattern.
    transmissionSweep(op, { ...request, points: 40 });
    transmissionSweep(op, { ...request, points: 10, method: 'direct' });
    const before = referencePerEnergy(op, sample(0.25), dir);
    loads.push(loadavg()[0]);
    const product = timed(() => transmissionSweep(op, request));
    loads.push(loadavg()[0]);
    const after = referencePerEnergy(op, sample(0.75), dir);
    loads.push(loadavg()[0]);
    const direct = timed(() => transmissionSweep(op, { ...request, method: 'direct' }));
    loads.push(loadavg()[0]);
    let worst = 0;
    direct.result.points.forEach((p, k) => (worst = Math.max(worst, largestDifference(p, product.result.points[k]))));
    out['product sweep (Schur complement): seconds (wall / CPU)'] = `${product.wall.toFixed(2)} / ${product.cpu.toFixed(2)}`;
    out['direct (one complex LU per energy): seconds (wall / CPU)'] = `${direct.wall.toFixed(2)} / ${direct.cpu.toFixed(2)}`;
    if (before !== null && after !== null) {
      const reference = (points * 0.5 * (before.wall + after.wall)) / 1000;
      const referenceCpu = (points * 0.5 * (before.cpu + after.cpu)) / 1000;
      out[`reference (SuperLU per energy, 2×20 energies, ×${points}/20): seconds (wall / CPU)`] = `${reference.toFixed(1)} / ${referenceCpu.toFixed(1)}`;
      out['ratio product / reference, wall / CPU (target ≤ 0.15)'] = `${(product.wall / reference).toFixed(3)} / ${(product.cpu / referenceCpu).toFixed(3)}`;
      out['ratio direct / reference, wall / CPU'] = `${(direct.wall / reference).toFixed(3)} / ${(direct.cpu / referenceCpu).toFixed(3)}`;
    } else out['reference'] = 'skipped: python3 with scipy not found (apt-get install python3-scipy, or pip install scipy)';
    out['max |ΔT| product against direct, every energy (target < 1e-10)'] = worst;
    if (spectral) {
      const s = timed(() => transmissionSweep(op, { ...request, spectral: true }));
      loads.push(loadavg()[0]);
      let worstSpectral = 0;
      direct.result.points.forEach((p, k) => (worstSpectral = Math.max(worstSpectral, largestDifference(p, s.result.points[k]))));
      const summary = s.result.spectral!;
      out['spectral: seconds (wall / CPU)'] = `${s.wall.toFixed(1)} / ${s.cpu.toFixed(1)}`;
      out['spectral: used / eigenpairs / nodes'] = `${summary.used ? 'yes' : `NO (${summary.reason})`} / ${summary.eigenpairs} / ${summary.nodes}`;
      out['spectral: max |ΔT| against direct'] = worstSpectral;
    }
    out[`load average 1m (start / ref / product / ref / direct${spectral ? ' / spectral' : ''})`] = loads.map((x) => x.toFixed(1)).join(' / ');
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
  return out;
}

if (process.argv.includes('--sweep') && process.argv[1]?.endsWith('bench-transmission.ts')) {
  const side = Number(process.argv.find((x) => x.startsWith('--side='))?.slice(7) ?? 100);
  const points = Number(process.argv.find((x) => x.startsWith('--points='))?.slice(9) ?? 1000);
  for (const [k, v] of Object.entries(await benchSweep1000(points, side, process.argv.includes('--spectral'))))
    console.log(`${k.padEnd(66)} ${typeof v === 'number' ? v.toPrecision(4) : v}`);
}

if (import.meta.url === `file://${process.argv[1]}` && !process.argv.includes('--sweep')) {
  const f = await benchTransmission();
  for (const [k, v] of Object.entries(f)) console.log(`${k.padEnd(34)} ${Number.isInteger(v) ? v : v.toPrecision(4)}`);
}
