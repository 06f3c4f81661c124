/**
 * Starting values and bounds of a peak fit, found from the data: a baseline (the median of
 * y), the N most prominent extrema of the smoothed deviation from it (peaks or dips), and
 * for each its half-width at half of its deviation. Common practice, no source.
 * Cost O(n log n) for the median and O(n·N) for the search.
 */
import { THERMAL_FWHM_PER_KT, hasAsymmetry, isThermal } from './fit-lineshapes.js';
import { parameterCount, peakOffset, type FitModelSpec } from './fit-model.js';

interface PeakGuess {
  energy: number;
  /** Full width at half deviation, meV. */
  width: number;
  /** Signed deviation from the baseline at the extremum. */
  height: number;
}

function median(values: ArrayLike<number>): number {
  const s = Array.from(values).sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m] : (s[m - 1] + s[m]) / 2;
}

/** Moving average over 2h + 1 samples (shorter at the ends). */
function smooth(y: ArrayLike<number>, h: number): Float64Array {
  const n = y.length;
  const out = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    let s = 0;
    let c = 0;
    for (let j = Math.max(0, i - h); j <= Math.min(n - 1, i + h); j++) {
      s += y[j];
      c++;
    }
    out[i] = s / c;
  }
  return out;
}

/**
 * The `count` most prominent peaks or dips of y(x) (x ascending), largest deviation first,
 * each at least one of its own widths away from those already taken.
 */
function detectPeaks(x: ArrayLike<number>, y: ArrayLike<number>, count: number): PeakGuess[] {
  const n = x.length;
  const base = median(y);
  const d = smooth(
    Array.from(y, (v) => v - base),
    Math.max(0, Math.floor(n / 200)),
  );
  const taken: PeakGuess[] = [];
  const used = new Uint8Array(n);
  const minStep = (x[n - 1] - x[0]) / Math.max(1, n - 1);
  for (let k = 0; k < count; k++) {
    let best = -1;
    for (let i = 0; i < n; i++) if (!used[i] && (best < 0 || Math.abs(d[i]) > Math.abs(d[best]))) best = i;
    if (best < 0 || d[best] === 0) break;
    const h = d[best];
    let lo = best;
    while (lo > 0 && Math.sign(d[lo - 1]) === Math.sign(h) && Math.abs(d[lo - 1]) > Math.abs(h) / 2) lo--;
    let hi = best;
    while (hi < n - 1 && Math.sign(d[hi + 1]) === Math.sign(h) && Math.abs(d[hi + 1]) > Math.abs(h) / 2) hi++;
    const width = Math.max(x[hi] - x[lo], 2 * minStep);
    taken.push({ energy: x[best], width, height: h });
    // Block this peak's neighbourhood (two widths) so the next pick is another peak.
    for (let i = 0; i < n; i++) if (Math.abs(x[i] - x[best]) < width) used[i] = 1;
  }
  return taken.sort((a, b) => a.energy - b.energy);
}

interface FitStart {
  values: number[];
  min: number[];
  max: number[];
  /** A typical size of each parameter, to scale the search and the difference steps. */
  scale: number[];
  guesses: PeakGuess[];
}

/**
 * Starting vector and bounds. `hints` (energy and width per peak, e.g. a computed pole or
 * a range the user brushed) replace the detected peaks where given.
 * Bounds: E0 within the range widened by a quarter on each side; Γ between 1e-6 of the
 * range (and of kT) and four times the range; q within ±1e4; amplitudes and background
 * free up to 1e6 times the spread of y.
 */
export function startingValues(spec: FitModelSpec, x: ArrayLike<number>, y: ArrayLike<number>, hints: { energy: number; width?: number }[] = []): FitStart {
  const n = x.length;
  const range = x[n - 1] - x[0];
  let ymin = Infinity;
  let ymax = -Infinity;
  for (let i = 0; i < n; i++) {
    ymin = Math.min(ymin, y[i]);
    ymax = Math.max(ymax, y[i]);
  }
  const spread = Math.max(ymax - ymin, 1e-12 * Math.max(Math.abs(ymax), 1));
  const detected = detectPeaks(x, y, spec.peaks);
  const guesses: PeakGuess[] = [];
  const base = median(y);
  for (let k = 0; k < spec.peaks; k++) {
    const hint = hints[k];
    const fallback = detected[k] ?? { energy: x[0] + ((k + 1) * range) / (spec.peaks + 1), width: range / (4 * spec.peaks), height: spread / 2 };
    if (hint) {
      const width = hint.width && hint.width > 0 ? hint.width : fallback.width;
      // Height: the data nearest the hinted energy.
      let nearest = 0;
      for (let i = 1; i < n; i++) if (Math.abs(x[i] - hint.energy) < Math.abs(x[nearest] - hint.energy)) nearest = i;
      guesses.push({ energy: hint.energy, width, height: y[nearest] - base || fallback.height });
    } else guesses.push(fallback);
  }
  guesses.sort((a, b) => a.energy - b.energy);

  const p = parameterCount(spec);
  const values = new Array<number>(p).fill(0);
  const min = new Array<number>(p).fill(-1e6 * spread - Math.abs(base));
  const max = new Array<number>(p).fill(1e6 * spread + Math.abs(base));
  const scale = new Array<number>(p).fill(spread);
  values[0] = base;
  if (spec.background === 'linear') {
    values[1] = 0;
    scale[1] = spread / Math.max(range, 1e-300);
    min[1] = -1e6 * scale[1];
    max[1] = 1e6 * scale[1];
  }
  const kT = isThermal(spec.lineshape) ? spec.kT : 0;
  const widthFloor = Math.max(1e-6 * range, 1e-6 * kT, 1e-300);
  for (let k = 0; k < spec.peaks; k++) {
    const g = guesses[k];
    const o = peakOffset(spec, k);
    const thermalWidth = THERMAL_FWHM_PER_KT * kT;
    // Under thermal broadening the seen width is roughly Γ + 3.5·kT; the area A·πΓ/2 is kept.
    let gamma = kT > 0 ? Math.max(g.width - thermalWidth, 0.1 * g.width) : g.width;
    gamma = Math.min(Math.max(gamma, widthFloor * 10), 2 * range);
    let amplitude = kT > 0 ? (g.height * g.width) / gamma : g.height;
    values[o] = g.energy;
    min[o] = x[0] - range / 4;
    max[o] = x[n - 1] + range / 4;
    scale[o] = gamma;
    values[o + 1] = gamma;
    min[o + 1] = widthFloor;
    max[o + 1] = 4 * range;
    scale[o + 1] = gamma;
    scale[o + 2] = Math.max(Math.abs(amplitude), spread);
    if (hasAsymmetry(spec.lineshape)) {
      // A peak starts close to Breit–Wigner (q = 3); a dip starts as q = 0.3, whose level
      // A sits above the dip's bottom.
      const dip = g.height < 0;
      const q = dip ? 0.3 : 3;
      amplitude = Math.abs(amplitude);
      if (dip) values[0] -= amplitude / spec.peaks;
      values[o + 3] = q;
      // (A, q) and (−A, −1/q) give the same curve up to the background: A ≥ 0 picks one.
      min[o + 2] = 0;
      min[o + 3] = -1e4;
      max[o + 3] = 1e4;
      scale[o + 3] = 1;
    }
    values[o + 2] = amplitude;
  }
  return { values, min, max, scale, guesses };
}
