/**
 * Calibrates the run cost model (server/runs/run-cost-model.json) and prints how well
 * the estimate of POST /runs/estimate matches measured runs: each case below (the
 * bench cavities and the demo devices) is computed as a worker would (one thread),
 * timed in CPU seconds (equal to wall time on an idle worker, and robust to a shared,
 * loaded machine), and compared with its estimate.
 *
 *   npx tsx scripts/calibrate-estimate.ts            measure, fit, write the model, print the table
 *   npx tsx scripts/calibrate-estimate.ts --check    measure and print the table against the stored model
 *   npx tsx scripts/calibrate-estimate.ts --refit    fit again to the measurements stored in the model (no runs)
 *   npm run bench -- --only=estimate                 same as --check
 *
 * The fit is least squares on relative errors with non-negative constants; the
 * deterministic parts (LU counts, sweep energies) are fitted to counts, only the
 * per-step seconds to times.
 */
import { readFileSync, readdirSync, writeFileSync } from 'node:fs';
import { cpus, loadavg } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { ENGINE_VERSION, runEngineTask, type EngineTask } from '../server/jobs/engine-task';
import { POLE_SEARCH_SPECTRUM_POINTS } from '../server/jobs/run-job';
import { predictRunSeconds, runCostFeatures, runCostModel, type RunCostFeatures, type RunCostModel } from '../server/runs/run-estimate';
import { buildCavitySystem, EffectiveHamiltonian } from '../shared/engine/effective-hamiltonian';
import { benchCavity } from './bench-cavity';
import { grapheneRectangle } from './bench-leads';

const root = join(fileURLToPath(import.meta.url), '..', '..');

export interface EstimateCase {
  name: string;
  document: unknown;
  request:
    | { kind: 'pole-search'; window: { emin: number; emax: number; gammaMax: number } }
    | { kind: 'transmission'; window: { emin: number; emax: number; points: number } };
}

/** The bench cavities (windows as in bench.ts's scaling section) and the demo devices with their seeded windows. */
export function estimateCases(): EstimateCase[] {
  const cases: EstimateCase[] = [];
  for (const side of [50, 71, 100]) {
    const doc = benchCavity(side);
    const op = new EffectiveHamiltonian(buildCavitySystem(doc));
    const t = op.hopping;
    const width = 0.027 * t * (10_000 / op.n);
    cases.push({
      name: `bench rectangle ${op.n} sites`,
      document: doc,
      request: { kind: 'pole-search', window: { emin: 0.4 * t, emax: 0.4 * t + width, gammaMax: 2e-3 * t } },
    });
  }
  {
    const doc = benchCavity(71);
    const t = new EffectiveHamiltonian(buildCavitySystem(doc)).hopping;
    cases.push({
      name: 'bench rectangle 5041 sites, sweep',
      document: doc,
      request: { kind: 'transmission', window: { emin: 0.3 * t, emax: 0.45 * t, points: 300 } },
    });
  }
  const dir = join(root, 'catalogue');
  for (const file of readdirSync(dir)
    .filter((f) => f.endsWith('.json'))
    .sort()) {
    const device = JSON.parse(readFileSync(join(dir, file), 'utf8')) as {
      key: string;
      model: unknown;
      poleSearch: { emin: number; emax: number; gammaMax: number };
    };
    cases.push({ name: `demo ${device.key}`, document: device.model, request: { kind: 'pole-search', window: device.poleSearch } });
  }
  // A graphene dot with wide numerical leads (armchair, 20 dimer lines top and bottom), whose
  // lead mode problems dominate each step: the case that fixes the lead terms of the step cost.
  cases.push({
    name: 'graphene 22×8, armchair leads 20',
    document: grapheneRectangle(22, 8, [
      { side: 'bottom', start: 1, width: 20 },
      { side: 'top', start: 1, width: 20 },
    ]),
    request: { kind: 'pole-search', window: { emin: 300, emax: 900, gammaMax: 200 } },
  });
  const r3 = JSON.parse(readFileSync(join(dir, 'hl-rect-r3.json'), 'utf8')) as { model: unknown };
  cases.push({ name: 'demo hl-rect-r3, sweep', document: r3.model, request: { kind: 'transmission', window: { emin: 2, emax: 7, points: 1000 } } });
  return cases;
}

export interface CaseMeasurement {
  name: string;
  features: RunCostFeatures;
  seconds: number;
  poleSeconds: number;
  poleLUs: number;
  setupSeconds: number;
  sweepSeconds: number;
  energies: number;
}

/** Computes one case as a worker would (one thread) and times its parts. */
export function measureCase(c: EstimateCase): CaseMeasurement {
  const features = runCostFeatures(c.document, c.request);
  const task: EngineTask =
    c.request.kind === 'pole-search'
      ? { kind: 'pole-search', document: c.document, window: c.request.window, spectrumPoints: POLE_SEARCH_SPECTRUM_POINTS }
      : { kind: 'transmission', document: c.document, window: c.request.window };
  // CPU time, not wall time: on an idle worker they agree (one thread), and CPU time is
  // what stays meaningful when the calibrating machine is shared and loaded.
  const cpu0 = process.cpuUsage();
  const result = runEngineTask(task);
  const cpu = process.cpuUsage(cpu0);
  const seconds = (cpu.user + cpu.system) / 1e6;
  // The pole search's share of the run, from the engine's own wall-clock split.
  const wall = Number(result.stats['seconds']);
  const poleSeconds = wall > 0 ? (seconds * Number(result.stats['poleSearchSeconds'] ?? 0)) / wall : 0;
  const s0 = process.cpuUsage();
  new EffectiveHamiltonian(buildCavitySystem(c.document));
  const s1 = process.cpuUsage(s0);
  const setupSeconds = (s1.user + s1.system) / 1e6;
  return {
    name: c.name,
    features,
    seconds,
    poleSeconds,
    poleLUs: Number(result.stats['factorisations'] ?? 0),
    setupSeconds,
    sweepSeconds: Math.max(0, seconds - poleSeconds - setupSeconds),
    energies: Number(result.stats['spectrumPoints'] ?? 0),
  };
}

/**
 * Least squares min Σ w_k (a_k·x − y_k)² over x ≥ 0, by trying every set of free
 * constants (there are at most five) and keeping the best feasible one.
 */
export function fitNonNegative(rows: number[][], y: number[], w: number[]): number[] {
  const p = rows[0].length;
  let best: number[] = new Array(p).fill(0);
  let bestResidual = y.reduce((s, v, k) => s + w[k] * v * v, 0);
  for (let mask = 1; mask < 1 << p; mask++) {
    const free = [...Array(p).keys()].filter((j) => mask & (1 << j));
    const m = free.length;
    const A = Array.from({ length: m }, () => new Array(m + 1).fill(0));
    rows.forEach((r, k) => {
      for (let a = 0; a < m; a++) {
        for (let b = 0; b < m; b++) A[a][b] += w[k] * r[free[a]] * r[free[b]];
        A[a][m] += w[k] * r[free[a]] * y[k];
      }
    });
    // Gaussian elimination with partial pivoting on the m×m normal equations.
    let singular = false;
    for (let c = 0; c < m && !singular; c++) {
      let piv = c;
      for (let r = c + 1; r < m; r++) if (Math.abs(A[r][c]) > Math.abs(A[piv][c])) piv = r;
      if (Math.abs(A[piv][c]) < 1e-300) singular = true;
      [A[c], A[piv]] = [A[piv], A[c]];
      for (let r = 0; r < m && !singular; r++) {
        if (r === c) continue;
        const f = A[r][c] / A[c][c];
        for (let k = c; k <= m; k++) A[r][k] -= f * A[c][k];
      }
    }
    if (singular) continue;
    const x = new Array(p).fill(0);
    free.forEach((j, a) => (x[j] = A[a][m] / A[a][a]));
    if (x.some((v) => v < 0)) continue;
    const residual = rows.reduce((s, r, k) => s + w[k] * (r.reduce((t, v, j) => t + v * x[j], 0) - y[k]) ** 2, 0);
    if (residual < bestResidual) {
      bestResidual = residual;
      best = x;
    }
  }
  return best;
}

const median = (xs: number[]) => {
  const s = [...xs].sort((a, b) => a - b);
  return s.length % 2 ? s[(s.length - 1) / 2] : 0.5 * (s[s.length / 2 - 1] + s[s.length / 2]);
};

/**
 * Fits the cost model's constants to measured cases: least squares on relative errors,
 * then reweighted (each case's weight times its error factor to the fourth power, 100 rounds) towards
 * the smallest worst factor, the figure the estimate promises; the best round is kept.
 */
export function fitCostModel(ms: CaseMeasurement[]): RunCostModel {
  const weights = ms.map(() => 1);
  let best: RunCostModel | null = null;
  for (let round = 0; round < 100; round++) {
    const model = fitWeighted(ms, weights);
    if (!best || worstFactor(model) < worstFactor(best)) best = model;
    ms.forEach((m, k) => {
      const r = predictRunSeconds(m.features, model).total / m.seconds;
      weights[k] *= Math.max(r, 1 / r) ** 4;
    });
  }
  return best!;
}

const worstFactor = (m: RunCostModel) => Math.max(m.accuracy.worstOver, m.accuracy.worstUnder);

function fitWeighted(ms: CaseMeasurement[], weight: number[]): RunCostModel {
  const w = new Map(ms.map((m, k) => [m, weight[k]]));
  const stepRow = (f: RunCostFeatures) => [f.factorFlops, f.factorNonzeros, f.sites, f.numericalLeads ?? 0, f.leadWork ?? 0];
  const poles = ms.filter((m) => m.features.kind === 'pole-search' && m.poleLUs > 0);
  const [base, perPiece, perLevel, perLevelSquared] = fitNonNegative(
    poles.map((m) => [1, m.features.pieces, m.features.expectedLevels, m.features.expectedLevels ** 2]),
    poles.map((m) => m.poleLUs),
    poles.map((m) => w.get(m)! / m.poleLUs ** 2),
  );
  const poleStepY = poles.map((m) => m.poleSeconds / m.poleLUs);
  const [pf, pn, ps, pq, pl] = fitNonNegative(
    poles.map((m) => stepRow(m.features)),
    poleStepY,
    poleStepY.map((v, k) => w.get(poles[k])! / v ** 2),
  );
  const sweeps = ms.filter((m) => m.energies > 0);
  const sweepY = sweeps.map((m) => m.sweepSeconds / m.energies);
  const [sf, sn, ss, sq, sl] = fitNonNegative(
    sweeps.map((m) => stepRow(m.features)),
    sweepY,
    sweepY.map((v, k) => w.get(sweeps[k])! / v ** 2),
  );
  const ratio = (kind: string) => {
    const r = sweeps.filter((m) => m.features.kind === kind).map((m) => m.energies / m.features.spectrumPoints);
    return r.length ? median(r) : 1;
  };
  const setup = ms.map((m) => m.setupSeconds / m.features.sites);
  const model: RunCostModel = {
    engineVersion: ENGINE_VERSION,
    calibratedAt: new Date().toISOString(),
    measuredOn: `${cpus().length} × ${cpus()[0]?.model.trim() ?? 'cpu'}, one thread per run, load average ${loadavg()[0].toFixed(2)} at the end`,
    poleStep: { perFlop: pf, perNonzero: pn, perSite: ps, perNumericalLead: pq, perLeadWork: pl },
    sweepEnergy: { perFlop: sf, perNonzero: sn, perSite: ss, perNumericalLead: sq, perLeadWork: sl },
    poleLUs: { base, perPiece, perLevel, perLevelSquared },
    energiesPerPoint: { poleSearch: ratio('pole-search'), transmission: ratio('transmission') },
    setupPerSite: median(setup),
    accuracy: { worstOver: 0, worstUnder: 0, cases: ms.length },
  };
  const ratios = ms.map((m) => predictRunSeconds(m.features, model).total / m.seconds);
  model.accuracy = { worstOver: Math.max(...ratios), worstUnder: Math.max(...ratios.map((r) => 1 / r)), cases: ms.length };
  model.measurements = ms;
  return model;
}

/** The accuracy table: estimate against measured time per case. */
export function accuracyTable(ms: CaseMeasurement[], model: RunCostModel): string {
  const lines = [
    `${'case'.padEnd(36)} ${'sites'.padStart(6)} ${'LUs est/meas'.padStart(13)} ${'estimate s'.padStart(10)} ${'measured s'.padStart(10)} ${'ratio'.padStart(6)}`,
  ];
  let worst = 1;
  for (const m of ms) {
    const p = predictRunSeconds(m.features, model);
    const r = p.total / m.seconds;
    worst = Math.max(worst, r, 1 / r);
    const lus = `${p.poleLUs + p.energies}/${m.poleLUs + m.energies}`;
    lines.push(
      `${m.name.padEnd(36)} ${String(m.features.sites).padStart(6)} ${lus.padStart(13)} ${p.total.toFixed(2).padStart(10)} ${m.seconds.toFixed(2).padStart(10)} ${r.toFixed(2).padStart(6)}`,
    );
  }
  lines.push(
    `worst factor ${worst.toFixed(2)} (target ≤ 1.5); load average now ${loadavg()
      .map((l) => l.toFixed(2))
      .join(' ')}`,
  );
  return lines.join('\n');
}

export function measureAll(log: (line: string) => void = () => {}): CaseMeasurement[] {
  return estimateCases().map((c) => {
    const m = measureCase(c);
    log(`  measured ${c.name}: ${m.seconds.toFixed(2)} s`);
    return m;
  });
}

const isMain = process.argv[1] && fileURLToPath(import.meta.url) === process.argv[1];
if (isMain) {
  const check = process.argv.includes('--check');
  const refit = process.argv.includes('--refit');
  let ms: CaseMeasurement[];
  if (refit) {
    ms = (runCostModel().measurements ?? []) as CaseMeasurement[];
    if (ms.length === 0) throw new Error('the stored cost model holds no measurements to refit');
    console.log(`Fitting again to the ${ms.length} stored measurements`);
  } else {
    console.log(
      `Measuring ${estimateCases().length} runs (one thread each); load average ${loadavg()
        .map((l) => l.toFixed(2))
        .join(' ')}`,
    );
    ms = measureAll(console.log);
  }
  if (check) {
    console.log(accuracyTable(ms, runCostModel()));
  } else {
    const model = fitCostModel(ms);
    const file = join(root, 'server', 'runs', 'run-cost-model.json');
    writeFileSync(file, JSON.stringify(model, null, 2) + '\n');
    console.log(`wrote ${file}`);
    console.log(accuracyTable(ms, model));
  }
}
