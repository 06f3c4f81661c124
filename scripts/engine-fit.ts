/**
 * `engine fit`: a peak fit of a measured trace (CSV/TSV) from the command line, for
 * notebooks and scripts. Same parsing, units and messages as the API's trace upload
 * (shared/engine/fit-trace.ts) and the same fit (shared/engine/fit.ts).
 *
 *   npm run engine -- fit DATA.csv --x COLUMN --y COLUMN --shape bw|fano|thermal|thermal-fano
 *     [--x-unit meV|ueV|mV --lever-arm MEV_PER_MV] [--y-unit T|e2h|2e2h|uS] [--temperature-mK T]
 *     [--range A:B] [--lines FIRST:LAST] [--peaks N] [--background constant|linear] [--curve]
 *
 * Prints JSON: each parameter with its standard error, χ², the covariance, the derived
 * figures per peak (E0, Γ, τ, Q, q) and the warnings.
 */
import { readFileSync, statSync } from 'node:fs';
import { fitPeaks, FitInputError } from '../shared/engine/fit';
import { LINESHAPES, type Lineshape } from '../shared/engine/fit-lineshapes';
import { parseTable, selectTrace, TraceError, TRACE_MAX_BYTES, X_UNITS, Y_UNITS, type TraceSelection } from '../shared/engine/fit-trace';

export class FitUsageError extends Error {}
export class FitFileError extends Error {}

const VALUE_FLAGS = ['x', 'y', 'shape', 'x-unit', 'lever-arm', 'y-unit', 'temperature-mK', 'range', 'lines', 'peaks', 'background'];

function pair(text: string, flag: string): [number, number] {
  const m = /^\s*([-+0-9.eE]+)\s*:\s*([-+0-9.eE]+)\s*$/.exec(text);
  const a = m ? Number(m[1]) : NaN;
  const b = m ? Number(m[2]) : NaN;
  if (!Number.isFinite(a) || !Number.isFinite(b)) throw new FitUsageError(`--${flag} needs A:B with two numbers, got '${text}'`);
  return [a, b];
}

function positiveNumber(text: string | undefined, flag: string): number | undefined {
  if (text === undefined) return undefined;
  const v = Number(text);
  if (text.trim() === '' || !Number.isFinite(v) || v <= 0) throw new FitUsageError(`--${flag} needs a number above 0, got '${text}'`);
  return v;
}

export function runFitCommand(file: string | undefined, rest: string[]): unknown {
  if (!file || file.startsWith('--')) throw new FitUsageError("'fit' needs a data file (CSV or TSV)");
  const flags: Record<string, string> = {};
  let curve = false;
  for (let k = 0; k < rest.length; k++) {
    const arg = rest[k];
    if (arg === '--curve') {
      curve = true;
      continue;
    }
    if (!arg.startsWith('--')) throw new FitUsageError(`unexpected argument '${arg}'`);
    const name = arg.slice(2);
    if (!VALUE_FLAGS.includes(name)) throw new FitUsageError(`unknown flag --${name} for 'fit'`);
    const value = rest[++k];
    if (value === undefined) throw new FitUsageError(`--${name} needs a value`);
    flags[name] = value;
  }
  for (const need of ['x', 'y', 'shape']) if (!(need in flags)) throw new FitUsageError(`'fit' needs --${need}`);
  const shape = flags['shape'] as Lineshape;
  if (!LINESHAPES.includes(shape)) throw new FitUsageError(`--shape must be one of ${LINESHAPES.join(', ')}, got '${flags['shape']}'`);
  const xUnit = (flags['x-unit'] ?? 'meV') as TraceSelection['xUnit'];
  if (!X_UNITS.includes(xUnit)) throw new FitUsageError(`--x-unit must be one of ${X_UNITS.join(', ')}, got '${xUnit}'`);
  const yUnit = (flags['y-unit'] ?? 'T') as TraceSelection['yUnit'];
  if (!Y_UNITS.includes(yUnit)) throw new FitUsageError(`--y-unit must be one of ${Y_UNITS.join(', ')}, got '${yUnit}'`);
  const background = flags['background'] ?? 'constant';
  if (background !== 'constant' && background !== 'linear') throw new FitUsageError(`--background must be constant or linear, got '${background}'`);
  const peaks = flags['peaks'] === undefined ? 1 : Number(flags['peaks']);
  if (!Number.isInteger(peaks) || peaks < 1 || peaks > 20) throw new FitUsageError(`--peaks must be a whole number from 1 to 20, got '${flags['peaks']}'`);
  const temperatureMK = positiveNumber(flags['temperature-mK'], 'temperature-mK');
  const leverArm = positiveNumber(flags['lever-arm'], 'lever-arm');
  if (xUnit === 'mV' && leverArm === undefined) throw new FitUsageError('--x-unit mV needs --lever-arm (meV per mV)');
  const range = flags['range'] === undefined ? undefined : pair(flags['range'], 'range');
  const lines = flags['lines'] === undefined ? undefined : pair(flags['lines'], 'lines');

  let size: number;
  try {
    size = statSync(file).size;
  } catch (err) {
    throw new FitFileError(`cannot read ${file}: ${(err as Error).message}`);
  }
  if (size > TRACE_MAX_BYTES) throw new FitFileError(`the file is ${size} bytes, over the limit of ${TRACE_MAX_BYTES} bytes`);
  const text = readFileSync(file, 'utf8');
  try {
    const table = parseTable(text);
    const trace = selectTrace(table, {
      x: flags['x'],
      y: flags['y'],
      xUnit,
      yUnit,
      leverArm,
      range: range && { from: range[0], to: range[1] },
      firstLine: lines?.[0],
      lastLine: lines?.[1],
    });
    const result = fitPeaks(trace.x, trace.y, { lineshape: shape, background, peaks, temperatureMK, yUnit: 'T' });
    return {
      file,
      columns: { x: trace.xColumn, y: trace.yColumn, xUnit, yUnit, leverArm: leverArm ?? null },
      lineshape: result.lineshape,
      background: result.background,
      temperatureMK: result.temperatureMK,
      points: result.points,
      converged: result.converged,
      iterations: result.iterations,
      parameters: result.parameters.map((p) => ({ name: p.name, value: p.value, error: p.error, unit: p.unit, atBound: p.atBound })),
      chiSquare: result.chiSquare,
      reducedChiSquare: result.reducedChiSquare,
      degreesOfFreedom: result.degreesOfFreedom,
      covariance: result.covariance,
      peaks: result.peaks,
      warnings: result.warnings,
      curve: curve ? result.curve : undefined,
      units: { energy: 'meV', width: 'meV', lifetime: 'ps', y: 'transmission T (conductance / (2e²/h))' },
    };
  } catch (err) {
    if (err instanceof TraceError || err instanceof FitInputError) throw new FitFileError(err.message);
    throw err;
  }
}
