/**
 * The function a peak fit adjusts: a background (constant, or linear about the middle of
 * the range) plus a sum of peaks of one lineshape (fit-lineshapes.ts), and the layout of
 * its parameter vector: [c0, (c1), then per peak E0, Γ, A, (q)].
 * Units: x and E0, Γ in meV, A and the background in the units of y, c1 in y per meV.
 */
import { hasAsymmetry, peakValue, type Lineshape } from './fit-lineshapes.js';

export type Background = 'constant' | 'linear';

export interface FitModelSpec {
  lineshape: Lineshape;
  background: Background;
  peaks: number;
  /** kT in meV (thermal lineshapes only; 0 otherwise). */
  kT: number;
  /** The x the linear background is measured from (middle of the range), meV. */
  xCenter: number;
}

export type ParameterRole = 'background' | 'slope' | 'energy' | 'width' | 'amplitude' | 'asymmetry';

export interface ParameterInfo {
  name: string;
  role: ParameterRole;
  /** Index of the peak (0-based), null for the background. */
  peak: number | null;
  unit: string;
}

function backgroundCount(spec: FitModelSpec): number {
  return spec.background === 'linear' ? 2 : 1;
}

function perPeakCount(spec: FitModelSpec): number {
  return hasAsymmetry(spec.lineshape) ? 4 : 3;
}

export function parameterCount(spec: FitModelSpec): number {
  return backgroundCount(spec) + spec.peaks * perPeakCount(spec);
}

/** Index of a peak's parameter in the vector. */
export function peakOffset(spec: FitModelSpec, peak: number): number {
  return backgroundCount(spec) + peak * perPeakCount(spec);
}

export function describeParameters(spec: FitModelSpec, yUnit: string): ParameterInfo[] {
  const out: ParameterInfo[] = [{ name: 'background', role: 'background', peak: null, unit: yUnit }];
  if (spec.background === 'linear') out.push({ name: 'slope', role: 'slope', peak: null, unit: `${yUnit}/meV` });
  for (let k = 0; k < spec.peaks; k++) {
    const n = spec.peaks > 1 ? `[${k + 1}]` : '';
    out.push({ name: `E0${n}`, role: 'energy', peak: k, unit: 'meV' });
    out.push({ name: `gamma${n}`, role: 'width', peak: k, unit: 'meV' });
    out.push({ name: `amplitude${n}`, role: 'amplitude', peak: k, unit: yUnit });
    if (hasAsymmetry(spec.lineshape)) out.push({ name: `q${n}`, role: 'asymmetry', peak: k, unit: '' });
  }
  return out;
}

export function backgroundValue(spec: FitModelSpec, p: ArrayLike<number>, x: number): number {
  return spec.background === 'linear' ? p[0] + p[1] * (x - spec.xCenter) : p[0];
}

/** Peak k alone at x (no background). */
export function componentValue(spec: FitModelSpec, p: ArrayLike<number>, k: number, x: number): number {
  const o = peakOffset(spec, k);
  const q = hasAsymmetry(spec.lineshape) ? p[o + 3] : 0;
  return peakValue(spec.lineshape, x, p[o], p[o + 1], p[o + 2], q, spec.kT);
}

/** The whole model at x. Cost O(peaks). */
export function modelValue(spec: FitModelSpec, p: ArrayLike<number>, x: number): number {
  let y = backgroundValue(spec, p, x);
  for (let k = 0; k < spec.peaks; k++) y += componentValue(spec, p, k, x);
  return y;
}
