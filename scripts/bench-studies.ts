// The study row of `npm run bench` (issue 14): steps per minute of a 40-step field sweep
// of a 2,500-site dot computed by 1, 2 and 4 worker processes, and the fraction of steps
// that needed the full search rather than continuation alone. Each process computes whole
// steps exactly as a study-step worker does (server/studies/study-step-task.ts: the
// certified search, the continuation into the next step and the transmission-map row of
// DEFAULT_MAP_POINTS energies), handed out one at a time as the study-step queue does,
// without the database round trips (a few ms per step); the outcome is assembled as the
// last worker does (study-assembly.ts). Expect near-linear speed-up up to the machine's
// core count, and a flat line beyond it.
// Sizes: BENCH_STUDY_SIDE (default 50: a 50×50 rectangle, 2,500 sites), BENCH_STUDY_STEPS (40),
// BENCH_STUDY_PROCESSES (1,2,4).
import { fork, type ChildProcess } from 'node:child_process';
import { fileURLToPath } from 'node:url';
import { loadavg } from 'node:os';
import type { StudyDefinition } from '../shared/engine/study/study-definition';
import { DEFAULT_MAP_POINTS } from '../shared/engine/study/study-transmission';
import { runStudyStepTask, type StudyStepOutput } from '../server/studies/study-step-task';
import { assembleOutcome } from '../server/studies/study-assembly';
import { rangeValues } from '../shared/engine/study/parameter-values';
import { hoppingEnergy } from '../shared/units/constants';
import { benchCavity } from './bench-cavity';

export function benchStudyDefinition(side = Number(process.env.BENCH_STUDY_SIDE ?? 50), steps = Number(process.env.BENCH_STUDY_STEPS ?? 40)): StudyDefinition {
  const model = benchCavity(side);
  const t = hoppingEnergy(5, 0.067);
  // The bench's pole window (scripts/bench.ts) scaled to this size: 4–5 poles a step at 2,500 sites.
  const width = 0.027 * t * (10_000 / (side * side));
  return {
    model,
    parameters: [{ path: 'field', values: rangeValues(0, 0.5, steps) }],
    window: { emin: 0.4 * t, emax: 0.4 * t + width, gammaMax: 2e-3 * t },
    transmissionPoints: DEFAULT_MAP_POINTS,
  };
}

/** Runs in each child: computes the steps it is sent and answers with the results. */
function child() {
  const def = benchStudyDefinition();
  process.on('message', (index: number) => {
    if (index < 0) process.exit(0);
    const r = runStudyStepTask({ definition: { kind: 'sweep', study: def }, index, reuse: null });
    process.send!({ index, result: r });
  });
  process.send!('ready');
}

async function withProcesses(count: number, def: StudyDefinition): Promise<{ seconds: number; results: StudyStepOutput[] }> {
  const total = def.parameters[0].values.length;
  const results: StudyStepOutput[] = new Array(total);
  let next = 0;
  let done = 0;
  let ready = 0;
  let t0 = 0;
  await new Promise<void>((resolve, reject) => {
    const kids: ChildProcess[] = [];
    // The clock starts once every process has loaded (tsx start-up is not a step).
    const feed = (kid: ChildProcess) => {
      if (next < total) kid.send(next++);
      else kid.send(-1);
    };
    for (let k = 0; k < count; k++) {
      const kid = fork(fileURLToPath(import.meta.url), ['--child'], { execArgv: ['--import', 'tsx'], serialization: 'advanced' });
      kid.on('message', (m: 'ready' | { index: number; result: StudyStepOutput }) => {
        if (m === 'ready') {
          if (++ready === count) {
            t0 = performance.now();
            kids.forEach(feed);
          }
          return;
        }
        results[m.index] = m.result;
        if (++done === total) {
          kids.forEach((c) => c.send(-1));
          resolve();
        } else feed(kid);
      });
      kid.on('error', reject);
      kids.push(kid);
    }
  });
  return { seconds: (performance.now() - t0) / 1000, results };
}

export async function benchStudies(): Promise<Record<string, number | string>> {
  const def = benchStudyDefinition();
  const steps = def.parameters[0].values.length;
  const out: Record<string, number | string> = { steps, 'load average before': loadavg()[0].toFixed(1) };
  let fraction = NaN;
  const counts = (process.env.BENCH_STUDY_PROCESSES ?? '1,2,4').split(',').map(Number);
  for (const n of counts) {
    const { seconds, results } = await withProcesses(n, def);
    out[`steps per minute, ${n} process${n > 1 ? 'es' : ''}`] = (60 * steps) / seconds;
    if (Number.isNaN(fraction)) {
      const outcome = assembleOutcome(
        { kind: 'sweep', study: def },
        results.map((r, index) => ({
          index,
          status: 'completed',
          search: r.search,
          continuation: r.continuation,
          transmission: r.transmission,
          record: null,
          error: null,
        })),
      ) as {
        fullSearchFraction: number;
        steps: { certified: boolean; poles: unknown[] }[];
        lines: { trajectories: { entered: boolean; left: boolean; points: { link: string }[] }[] }[];
      };
      fraction = outcome.fullSearchFraction;
      // Why steps need the search: poles crossing the window's edges (physics) or
      // continuations that did not land on a listed pole (method). Counted per pole link.
      const trajectories = outcome.lines.flatMap((l) => l.trajectories);
      const links = trajectories.flatMap((t) => t.points.slice(1));
      out['pole links step to step'] = links.length;
      out['of them by continuation'] = links.filter((p) => p.link === 'continuation').length;
      out['of them by mode overlap only'] = links.filter((p) => p.link === 'overlap').length;
      out['poles entering the window'] = trajectories.filter((t) => t.entered).length;
      out['poles leaving the window (or not followed)'] = trajectories.filter((t) => t.left).length;
      out['sites'] = results[0].search ? Buffer.from(results[0].search.sites.i, 'base64').length / 4 : 0;
      out['poles per step (mean)'] = outcome.steps.reduce((s, r) => s + r.poles.length, 0) / steps;
      out['steps certified'] = `${outcome.steps.filter((r) => r.certified).length} of ${steps}`;
      out[`seconds per step (mean, ${n} process${n > 1 ? 'es' : ''})`] = seconds / steps;
    }
  }
  out['fraction needing a full search'] = fraction;
  out['load average after'] = loadavg()[0].toFixed(1);
  return out;
}

if (process.argv.includes('--child')) child();
