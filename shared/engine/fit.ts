/**
 * Least-squares peak fits: background + N peaks of one lineshape (fit-model.ts) fitted to
 * (x, y) by Levenberg–Marquardt, with bounded parameters, automatic starting values
 * (fit-start.ts), standard errors from the covariance matrix scaled by the reduced χ², and
 * plain statements when something is off.
 *
 * The search (fit-levenberg-marquardt.ts, on ml-matrix; why not the ml-levenberg-marquardt
 * package is said there) works on scaled parameters u = (p − p_start)/scale and residuals
 * divided by the spread of y, so that its damping and difference steps do not depend on
 * units. At the solution the Jacobian is taken by central differences and the covariance is
 * C = s²·(JᵀJ)⁻¹ with s² = χ²/(n − p) (the data carry no error bars; common practice, e.g.
 * Press et al., Numerical Recipes, 3rd ed., §15.4–15.5). Parameters that end on a bound are
 * held fixed in the covariance (their error is reported as null) and said so.
 *
 * Cost: per iteration 2p + 1 model evaluations over the n points (p parameters), O(n·p²)
 * for the normal equations; a few hundred iterations at most.
 */
import { inverse, Matrix } from 'ml-matrix';
import { HBAR_MEV_PS } from '../units/constants.js';
import { BOLTZMANN_MEV_PER_MK, THERMAL_FWHM_PER_KT, hasAsymmetry, isThermal, type Lineshape } from './fit-lineshapes.js';
import {
  backgroundValue,
  componentValue,
  describeParameters,
  modelValue,
  parameterCount,
  peakOffset,
  type Background,
  type FitModelSpec,
  type ParameterInfo,
} from './fit-model.js';
import { levenbergMarquardt } from './fit-levenberg-marquardt.js';
import { startingValues } from './fit-start.js';

export interface FitOptions {
  lineshape: Lineshape;
  background?: Background;
  peaks?: number;
  /** Temperature in mK (thermal lineshapes need it; ignored otherwise except for the kT ≫ Γ warning). */
  temperatureMK?: number;
  /** Starting energy (and width) per peak, e.g. a computed pole; detected from the data otherwise. */
  hints?: { energy: number; width?: number }[];
  /** Unit of y for the report ('T' for transmission). */
  yUnit?: string;
  /** Called now and then with the fraction done (0..1). */
  onProgress?: (fraction: number) => void;
  /** Iteration cap of the search (default 400). */
  maxIterations?: number;
}

export interface FittedParameter extends ParameterInfo {
  value: number;
  /** One-sigma standard error; null when the parameter sits on a bound or is not determined. */
  error: number | null;
  atBound: 'lower' | 'upper' | null;
  min: number;
  max: number;
}

export interface FittedPeak {
  energy: number;
  energyError: number | null;
  width: number;
  widthError: number | null;
  /** τ = ħ/Γ in ps. */
  lifetimePs: number;
  lifetimeError: number | null;
  /** Q = E0/Γ (E0 from the band bottom when x is an energy). */
  quality: number;
  qualityError: number | null;
  amplitude: number;
  amplitudeError: number | null;
  q: number | null;
  qError: number | null;
  /** Full width at half maximum of the fitted (possibly thermally broadened) peak, meV; null when it has none (a dip, a Fano shape with no clear peak). */
  fwhm: number | null;
}

type FitWarningCode = 'not_converged' | 'at_bound' | 'undetermined' | 'thermal_width' | 'overlapping_peaks' | 'few_points';

export interface FitWarning {
  code: FitWarningCode;
  message: string;
}

export interface FitResult {
  lineshape: Lineshape;
  background: Background;
  peakCount: number;
  temperatureMK: number | null;
  /** kT in meV used by a thermal lineshape (0 otherwise). */
  kT: number;
  parameters: FittedParameter[];
  /** Covariance of the parameters (same order), scaled by the reduced χ²; rows and columns of bound parameters are zero. */
  covariance: number[][];
  /** Sum of squared residuals (y units²): the data carry no error bars. */
  chiSquare: number;
  /** χ²/(n − p): the variance of the noise the errors are scaled to. */
  reducedChiSquare: number;
  degreesOfFreedom: number;
  points: number;
  iterations: number;
  converged: boolean;
  peaks: FittedPeak[];
  warnings: FitWarning[];
  curve: { x: number[]; y: number[]; fit: number[]; background: number[]; components: number[][]; residuals: number[] };
}

export class FitInputError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'FitInputError';
  }
}

/**
 * Full width at half maximum of a single-peak curve f on [a, b], by bisection around its
 * sampled maximum; null when the half level is not crossed on both sides.
 */
function fwhmOf(f: (x: number) => number, center: number, a: number, b: number): number | null {
  const samples = 801;
  let best = center;
  let top = f(center);
  for (let i = 0; i < samples; i++) {
    const x = a + ((b - a) * i) / (samples - 1);
    const v = f(x);
    if (v > top) {
      top = v;
      best = x;
    }
  }
  if (!(top > 0)) return null;
  const half = top / 2;
  const cross = (lo: number, hi: number): number | null => {
    // f(lo) on one side of half, f(hi) on the other.
    if ((f(lo) - half) * (f(hi) - half) > 0) return null;
    for (let k = 0; k < 100; k++) {
      const m = (lo + hi) / 2;
      if ((f(m) - half) * (f(lo) - half) > 0) lo = m;
      else hi = m;
    }
    return (lo + hi) / 2;
  };
  const left = cross(a, best);
  const right = cross(best, b);
  return left === null || right === null ? null : right - left;
}

/**
 * Fits background + peaks to (x, y). x ascending (meV), at least parameters + 2 points.
 * Throws FitInputError for data it cannot fit (too few points, non-finite values).
 */
export function fitPeaks(xIn: ArrayLike<number>, yIn: ArrayLike<number>, options: FitOptions): FitResult {
  const n = xIn.length;
  const lineshape = options.lineshape;
  const background = options.background ?? 'constant';
  const peaks = options.peaks ?? 1;
  if (!Number.isInteger(peaks) || peaks < 1 || peaks > 20) throw new FitInputError(`the number of peaks must be a whole number from 1 to 20, got ${peaks}`);
  const temperatureMK = options.temperatureMK ?? null;
  if (isThermal(lineshape) && !(temperatureMK !== null && temperatureMK > 0))
    throw new FitInputError('a thermally broadened lineshape needs a temperature above 0 mK');
  const kT = isThermal(lineshape) ? (temperatureMK as number) * BOLTZMANN_MEV_PER_MK : 0;
  if (yIn.length !== n) throw new FitInputError('x and y must have the same length');
  const order = Array.from({ length: n }, (_, i) => i).sort((a, b) => xIn[a] - xIn[b]);
  const x = order.map((i) => xIn[i]);
  const y = order.map((i) => yIn[i]);
  for (let i = 0; i < n; i++) if (!Number.isFinite(x[i]) || !Number.isFinite(y[i])) throw new FitInputError(`point ${i + 1} is not a finite number`);
  for (let i = 1; i < n; i++) if (x[i] === x[i - 1]) throw new FitInputError(`two points share x = ${x[i]}`);
  const spec: FitModelSpec = { lineshape, background, peaks, kT, xCenter: (x[0] + x[n - 1]) / 2 };
  const p = parameterCount(spec);
  if (n < p + 2) throw new FitInputError(`too few points: ${n} for ${p} parameters (at least ${p + 2} needed)`);

  const start = startingValues(spec, x, y, options.hints);
  const ySpread = start.scale[0];
  const toPhysical = (u: ArrayLike<number>): number[] => Array.from({ length: p }, (_, k) => start.values[k] + start.scale[k] * u[k]);
  const minU = start.min.map((m, k) => (m - start.values[k]) / start.scale[k]);
  const maxU = start.max.map((m, k) => (m - start.values[k]) / start.scale[k]);
  const yScaled = y.map((v) => v / ySpread);
  const problem = {
    n,
    y: yScaled,
    lo: minU,
    hi: maxU,
    evaluate: (uu: ArrayLike<number>, out: Float64Array) => {
      const phys = toPhysical(uu);
      for (let i = 0; i < n; i++) out[i] = modelValue(spec, phys, x[i]) / ySpread;
    },
  };
  const maxIterations = options.maxIterations ?? 400;
  // A Fano fit is also started with every q of the opposite sign: an asymmetric peak's
  // side is not known beforehand, and the search does not cross q = 0 easily.
  const starts: number[][] = [new Array<number>(p).fill(0)];
  if (hasAsymmetry(lineshape)) {
    const flipped = new Array<number>(p).fill(0);
    for (let k = 0; k < peaks; k++) {
      const o = peakOffset(spec, k) + 3;
      flipped[o] = (-2 * start.values[o]) / start.scale[o];
    }
    starts.push(flipped);
  }
  let best: ReturnType<typeof levenbergMarquardt> | null = null;
  let iterations = 0;
  starts.forEach((u0, s) => {
    const out = levenbergMarquardt(problem, u0, {
      maxIterations,
      onIteration: (k) => {
        if (k % 10 === 0) options.onProgress?.(Math.min(0.95, (s + Math.min(1, k / 60)) / starts.length));
      },
    });
    iterations += out.iterations;
    if (!best || out.chiSquare < best.chiSquare) best = out;
  });
  const { u, converged } = best!;

  const values = toPhysical(u);
  // Residuals and χ² in y units.
  const fit = x.map((xi) => modelValue(spec, values, xi));
  const residuals = y.map((yi, i) => yi - fit[i]);
  const chiSquare = residuals.reduce((s, r) => s + r * r, 0);

  // Jacobian of the model in physical units at the solution, by central differences.
  const jac = new Matrix(n, p);
  for (let k = 0; k < p; k++) {
    const h = 1e-6 * start.scale[k];
    const plus = values.slice();
    const minus = values.slice();
    plus[k] += h;
    minus[k] -= h;
    for (let i = 0; i < n; i++) jac.set(i, k, (modelValue(spec, plus, x[i]) - modelValue(spec, minus, x[i])) / (2 * h));
  }
  const jtjAll = jac.transpose().mmul(jac);
  /** s²·(JᵀJ)⁻¹ over the free parameters (others held fixed: zero rows), and whether it is near-singular. */
  const covarianceOf = (free: number[]) => {
    const dof = n - free.length;
    const reduced = chiSquare / Math.max(dof, 1);
    const covariance: number[][] = Array.from({ length: p }, () => new Array<number>(p).fill(0));
    let undetermined = false;
    if (free.length === 0) return { covariance, undetermined, reduced, dof };
    // Invert in scaled form (unit diagonal) so that the conditioning reflects correlations, not units.
    const d = free.map((k) => Math.sqrt(jtjAll.get(k, k)) || 1);
    const scaled = new Matrix(free.length, free.length);
    for (let a = 0; a < free.length; a++) for (let b = 0; b < free.length; b++) scaled.set(a, b, jtjAll.get(free[a], free[b]) / (d[a] * d[b]));
    let inv: Matrix | null;
    try {
      inv = inverse(scaled);
    } catch {
      inv = null;
    }
    let norm = 0;
    let normInv = 0;
    for (let a = 0; a < free.length; a++) {
      let r = 0;
      let ri = 0;
      for (let b = 0; b < free.length; b++) {
        const v = inv ? (inv.get(a, b) / (d[a] * d[b])) * reduced : NaN;
        covariance[free[a]][free[b]] = v;
        r += Math.abs(scaled.get(a, b));
        ri += inv ? Math.abs(inv.get(a, b)) : Infinity;
      }
      norm = Math.max(norm, r);
      normInv = Math.max(normInv, ri);
      if (!(covariance[free[a]][free[a]] >= 0) || !Number.isFinite(covariance[free[a]][free[a]])) undetermined = true;
    }
    // Condition above 1e12 after scaling: some combination of parameters is not fixed by the data.
    if (!(norm * normInv <= 1e12)) undetermined = true;
    return { covariance, undetermined, reduced, dof };
  };
  // A parameter is on its bound when the search ended there (1e-3 of its typical size) or
  // when its one-sigma interval reaches the bound: the data then do not keep it off.
  const firstPass = covarianceOf(Array.from({ length: p }, (_, k) => k));
  const atBound: ('lower' | 'upper' | null)[] = values.map((v, k) => {
    const sigma = Math.sqrt(Math.max(0, firstPass.covariance[k][k])) || 0;
    const reach = Math.max(1e-3 * start.scale[k], Number.isFinite(sigma) ? sigma : 0);
    return v - start.min[k] <= reach ? 'lower' : start.max[k] - v <= reach ? 'upper' : null;
  });
  const free = atBound.map((b, k) => (b === null ? k : -1)).filter((k) => k >= 0);
  const { covariance, undetermined, reduced, dof } = free.length === p ? firstPass : covarianceOf(free);
  const infos = describeParameters(spec, options.yUnit ?? 'T');
  const errorOf = (k: number): number | null => {
    if (atBound[k] !== null) return null;
    const v = covariance[k][k];
    return Number.isFinite(v) && v >= 0 ? Math.sqrt(v) : null;
  };
  const parameters: FittedParameter[] = infos.map((info, k) => ({
    ...info,
    value: values[k],
    error: errorOf(k),
    atBound: atBound[k],
    min: start.min[k],
    max: start.max[k],
  }));

  const fittedPeaks: FittedPeak[] = [];
  const components: number[][] = [];
  for (let k = 0; k < peaks; k++) {
    const o = peakOffset(spec, k);
    const e0 = values[o];
    const g = values[o + 1];
    const sE = errorOf(o);
    const sG = errorOf(o + 1);
    const covEG = covariance[o][o + 1];
    const qualityError = sE !== null && sG !== null ? Math.sqrt(Math.max(0, (sE / g) ** 2 + ((e0 * sG) / (g * g)) ** 2 - (2 * e0 * covEG) / g ** 3)) : null;
    const single = (xv: number) => componentValue(spec, values, k, xv);
    const halfSpan = Math.max(4 * g, isThermal(lineshape) ? 6 * THERMAL_FWHM_PER_KT * kT : 0);
    fittedPeaks.push({
      energy: e0,
      energyError: sE,
      width: g,
      widthError: sG,
      lifetimePs: HBAR_MEV_PS / g,
      lifetimeError: sG === null ? null : (HBAR_MEV_PS * sG) / (g * g),
      quality: e0 / g,
      qualityError,
      amplitude: values[o + 2],
      amplitudeError: errorOf(o + 2),
      q: hasAsymmetry(lineshape) ? values[o + 3] : null,
      qError: hasAsymmetry(lineshape) ? errorOf(o + 3) : null,
      fwhm: lineshape === 'bw' ? g : fwhmOf(single, e0, e0 - halfSpan, e0 + halfSpan),
    });
    components.push(x.map((xv) => single(xv)));
  }

  const warnings: FitWarning[] = [];
  if (!converged)
    warnings.push({
      code: 'not_converged',
      message: `The fit did not converge within ${iterations} iterations: χ² was still falling. Check the starting values, the range or the number of peaks before using these figures.`,
    });
  parameters.forEach((par) => {
    if (par.atBound)
      warnings.push({
        code: 'at_bound',
        message: `${par.name} sits on (or within one standard error of) its ${par.atBound} bound, ${(par.atBound === 'lower' ? par.min : par.max).toPrecision(4)} ${par.unit}: the data do not keep it off the bound, so it is held there and no uncertainty is given for it.`,
      });
  });
  if (undetermined)
    warnings.push({
      code: 'undetermined',
      message:
        'Some parameters are not fixed by the data (the covariance matrix is nearly singular): their uncertainties are unreliable. Fewer peaks, a narrower lineshape choice or a wider range may help.',
    });
  if (temperatureMK !== null && temperatureMK > 0) {
    const kTm = temperatureMK * BOLTZMANN_MEV_PER_MK;
    const thermalWidth = THERMAL_FWHM_PER_KT * kTm;
    fittedPeaks.forEach((pk, k) => {
      const head = `Peak ${k + 1}: at ${temperatureMK} mK the thermal width 3.53·kT = ${thermalWidth.toPrecision(3)} meV`;
      if (isThermal(lineshape) && thermalWidth > 3 * pk.width)
        warnings.push({
          code: 'thermal_width',
          message: `${head} is over three times Γ = ${pk.width.toPrecision(3)} meV (kT ≫ Γ): the peak's width is the temperature's, not the resonance's; Γ is poorly determined and only A·Γ (the peak's area) is well fixed.`,
        });
      else if (!isThermal(lineshape) && thermalWidth > pk.width / 2)
        warnings.push({
          code: 'thermal_width',
          message: `${head} is not small against the fitted Γ = ${pk.width.toPrecision(3)} meV: this Γ includes thermal broadening${thermalWidth > pk.width ? ' and mostly measures the temperature' : ''}. Fit the thermally broadened lineshape instead.`,
        });
    });
  }
  for (let a = 0; a < fittedPeaks.length; a++)
    for (let b = a + 1; b < fittedPeaks.length; b++) {
      const pa = fittedPeaks[a];
      const pb = fittedPeaks[b];
      if (Math.abs(pa.energy - pb.energy) < (pa.width + pb.width) / 2)
        warnings.push({
          code: 'overlapping_peaks',
          message: `Peaks ${a + 1} and ${b + 1} overlap (|ΔE| < (Γ₁ + Γ₂)/2): their widths and heights are strongly correlated, and a sum of Breit–Wigner peaks may not describe overlapping resonances.`,
        });
    }
  if (n < 5 * p) warnings.push({ code: 'few_points', message: `Only ${n} points for ${p} parameters: the uncertainties rest on few degrees of freedom.` });
  options.onProgress?.(1);

  return {
    lineshape,
    background,
    peakCount: peaks,
    temperatureMK,
    kT,
    parameters,
    covariance,
    chiSquare,
    reducedChiSquare: reduced,
    degreesOfFreedom: dof,
    points: n,
    iterations,
    converged,
    peaks: fittedPeaks,
    warnings,
    curve: { x, y, fit, background: x.map((xv) => backgroundValue(spec, values, xv)), components, residuals },
  };
}
