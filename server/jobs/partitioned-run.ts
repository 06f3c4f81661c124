import { spectrumBudget, type EngineTask, type EngineTaskResult } from './engine-task.js';
import { runInThread } from './thread-runner.js';

/**
 * Splits a pole search over several worker threads: the window is cut into
 * `threads` sub-windows of equal width (each certified on its own, so the
 * certificate of the whole is the list of all their pieces), and the spectrum is
 * one more part. At most `threads` parts run at once. A transmission run, or
 * threads = 1, runs as one part.
 */
export async function runPartitioned(
  task: EngineTask,
  threads: number,
  onProgress: (stage: string, fraction: number) => void,
  signal?: AbortSignal,
): Promise<EngineTaskResult> {
  if (task.kind !== 'pole-search' || threads <= 1) return runInThread(task, onProgress, signal);
  const { emin, emax, gammaMax } = task.window;
  const parts: EngineTask[] = [];
  for (let k = 0; k < threads; k++) {
    const a = emin + ((emax - emin) * k) / threads;
    const b = k === threads - 1 ? emax : emin + ((emax - emin) * (k + 1)) / threads;
    parts.push({ kind: 'pole-search', document: task.document, window: { emin: a, emax: b, gammaMax }, spectrumPoints: 0 });
  }
  // The spectrum part keeps the budget of a pole search's preview spectrum.
  parts.push({
    kind: 'transmission',
    document: task.document,
    window: { emin, emax, points: task.spectrumPoints },
    maxPoints: spectrumBudget('pole-search', task.spectrumPoints),
  });

  const fractions = parts.map(() => 0);
  const report = (k: number) => (stage: string, f: number) => {
    fractions[k] = f;
    onProgress(stage, fractions.reduce((s, x) => s + x, 0) / parts.length);
  };
  const results: EngineTaskResult[] = new Array(parts.length);
  let next = 0;
  const lane = async () => {
    while (next < parts.length) {
      const k = next++;
      results[k] = await runInThread(parts[k], report(k), signal);
    }
  };
  await Promise.all(Array.from({ length: Math.min(threads, parts.length) }, lane));

  const poleParts = results.slice(0, threads);
  const spectrum = results[threads];
  const pieces = poleParts.flatMap((r) => r.certificate?.pieces ?? []);
  let offset = 0;
  const poles = poleParts.flatMap((r) => {
    const shifted = r.poles.map((p) => ({ ...p, piece: p.piece + offset }));
    offset += r.certificate?.pieces.length ?? 0;
    return shifted;
  });
  const certified = pieces.length > 0 && pieces.every((p) => p.certified);
  const uncertified = pieces.filter((p) => !p.certified).length;
  return {
    ...spectrum,
    thresholds: [...new Set(poleParts.flatMap((r) => r.thresholds))].sort((a, b) => a - b),
    poles,
    certificate: {
      pieces,
      certified,
      summary: `${poles.length} pole(s) in ${pieces.length} piece(s) over ${threads} threads; ${certified ? 'every piece certified' : `${uncertified} piece(s) not certified`}`,
    },
    stats: {
      ...spectrum.stats,
      threads,
      factorisations: poleParts.reduce((s, r) => s + Number(r.stats['factorisations'] ?? 0), 0),
      poleSearchSeconds: Math.max(...poleParts.map((r) => Number(r.stats['poleSearchSeconds'] ?? 0))),
    },
  };
}
