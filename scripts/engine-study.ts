/**
 * `engine study`: a parameter study or a tolerance ensemble from the command line
 * (shared/engine/study). Prints JSON.
 *
 *   npm run engine -- study MODEL.json --param PATH --values FROM:TO:COUNT|V1,V2,… --emin A --emax B --gmax G
 *       [--param2 PATH --values2 …] [--probes P] [--seed S] [--max-nodes M] [--map-points N]
 *   npm run engine -- study MODEL.json --ensemble N --emin A --emax B --gmax G
 *       [--roughness-nm R --correlation-nm L] [--seed S] [--follow E]
 *       [--jitter PATH:SIGMA[:dimension|lead-width|gate-offset]]… [--disorder]
 *       [--tolerance-energy A:B] [--tolerance-width A:B] [--tolerance-q A:B] [--bins K]
 *
 * A study prints every step's poles, the linked trajectories and the marks
 * (crossing, avoided crossing, width exchange), and with --map-points N the
 * transmission map T(E, p) (N energies per step); an ensemble prints each
 * realisation (its seed, what was drawn, its poles) and the statistics of the
 * followed resonance (default: the nominal pole nearest the window's middle).
 */
import { parseParameterValues } from '../shared/engine/study/parameter-values';
import { runStudy } from '../shared/engine/study/study-run';
import { runEnsemble } from '../shared/engine/study/ensemble-run';
import { ensembleReport, studyReport } from '../shared/engine/study/study-report';
import type { EnsembleDefinition, JitterKind, JitterSpec, Range } from '../shared/engine/study/ensemble-definition';
import type { StudyDefinition } from '../shared/engine/study/study-definition';

export class StudyUsageError extends Error {}

const VALUE_FLAGS = [
  'param',
  'values',
  'param2',
  'values2',
  'emin',
  'emax',
  'gmax',
  'probes',
  'seed',
  'max-nodes',
  'ensemble',
  'roughness-nm',
  'correlation-nm',
  'follow',
  'jitter',
  'tolerance-energy',
  'tolerance-width',
  'tolerance-q',
  'bins',
  'map-points',
];
const JITTER_KINDS: JitterKind[] = ['dimension', 'lead-width', 'gate-offset'];

function numberFlag(flags: Map<string, string[]>, name: string, opts: { integer?: boolean; min?: number } = {}): number | undefined {
  const text = flags.get(name)?.at(-1);
  if (text === undefined) return undefined;
  const v = Number(text);
  if (text.trim() === '' || !Number.isFinite(v)) throw new StudyUsageError(`--${name} needs a number, got '${text}'`);
  if (opts.integer && !Number.isInteger(v)) throw new StudyUsageError(`--${name} must be an integer, got '${text}'`);
  if (opts.min !== undefined && v < opts.min) throw new StudyUsageError(`--${name} must be ≥ ${opts.min}, got '${text}'`);
  return v;
}

function range(flags: Map<string, string[]>, name: string): Range | undefined {
  const text = flags.get(name)?.at(-1);
  if (text === undefined) return undefined;
  const m = /^\s*([-+0-9.eE]*)\s*:\s*([-+0-9.eE]*)\s*$/.exec(text);
  if (!m || (m[1] === '' && m[2] === '')) throw new StudyUsageError(`--${name} needs MIN:MAX (either may be left empty), got '${text}'`);
  const out: Range = {};
  if (m[1] !== '') out.min = Number(m[1]);
  if (m[2] !== '') out.max = Number(m[2]);
  if ((out.min !== undefined && !Number.isFinite(out.min)) || (out.max !== undefined && !Number.isFinite(out.max)))
    throw new StudyUsageError(`--${name}: '${text}' is not MIN:MAX`);
  return out;
}

function values(flags: Map<string, string[]>, name: string): number[] {
  const text = flags.get(name)?.at(-1);
  if (text === undefined) throw new StudyUsageError(`a study needs --${name}`);
  try {
    return parseParameterValues(text);
  } catch (err) {
    throw new StudyUsageError(`--${name}: ${(err as Error).message}`);
  }
}

export function runStudyCommand(model: unknown, rest: string[]): unknown {
  const flags = new Map<string, string[]>();
  let disorder = false;
  for (let k = 0; k < rest.length; k++) {
    const arg = rest[k];
    if (arg === '--disorder') {
      disorder = true;
      continue;
    }
    if (!arg.startsWith('--')) throw new StudyUsageError(`unexpected argument '${arg}'`);
    const name = arg.slice(2);
    if (!VALUE_FLAGS.includes(name)) throw new StudyUsageError(`unknown flag --${name} for 'study'`);
    const value = rest[++k];
    if (value === undefined) throw new StudyUsageError(`--${name} needs a value`);
    flags.set(name, [...(flags.get(name) ?? []), value]);
  }
  for (const need of ['emin', 'emax', 'gmax']) if (!flags.has(need)) throw new StudyUsageError(`'study' needs --${need}`);
  const window = { emin: numberFlag(flags, 'emin')!, emax: numberFlag(flags, 'emax')!, gammaMax: numberFlag(flags, 'gmax')! };
  const search = {
    probes: numberFlag(flags, 'probes', { integer: true, min: 1 }),
    maxNodes: numberFlag(flags, 'max-nodes', { integer: true, min: 1 }),
  };
  const ensemble = numberFlag(flags, 'ensemble', { integer: true, min: 1 });
  if (ensemble === undefined) {
    if (!flags.has('param')) throw new StudyUsageError("'study' needs --param PATH --values … (a parameter study) or --ensemble N (a tolerance ensemble)");
    for (const f of ['roughness-nm', 'correlation-nm', 'follow', 'jitter', 'tolerance-energy', 'tolerance-width', 'tolerance-q', 'bins']) {
      if (flags.has(f)) throw new StudyUsageError(`--${f} belongs to an ensemble (--ensemble N)`);
    }
    const parameters = [{ path: flags.get('param')!.at(-1)!, values: values(flags, 'values') }];
    if (flags.has('param2')) parameters.push({ path: flags.get('param2')!.at(-1)!, values: values(flags, 'values2') });
    const def: StudyDefinition = {
      model,
      parameters,
      window,
      search: { ...search, seed: numberFlag(flags, 'seed', { integer: true, min: 0 }) },
      transmissionPoints: numberFlag(flags, 'map-points', { integer: true, min: 0 }),
    };
    try {
      return studyReport(def, runStudy(def));
    } catch (err) {
      if (err instanceof RangeError) throw new StudyUsageError(err.message);
      throw err;
    }
  }
  if (flags.has('param')) throw new StudyUsageError('give either --param (a study) or --ensemble (an ensemble), not both');
  if (flags.has('map-points')) throw new StudyUsageError('--map-points belongs to a parameter study (--param), not an ensemble');
  const jitter: JitterSpec[] = (flags.get('jitter') ?? []).map((text) => {
    const [path, sigma, kind = 'dimension'] = text.split(':');
    const s = Number(sigma);
    if (!path || sigma === undefined || !Number.isFinite(s) || s < 0) throw new StudyUsageError(`--jitter needs PATH:SIGMA[:KIND], got '${text}'`);
    if (!JITTER_KINDS.includes(kind as JitterKind)) throw new StudyUsageError(`--jitter kind must be one of ${JITTER_KINDS.join(', ')}, got '${kind}'`);
    return { path, sigma: s, kind: kind as JitterKind };
  });
  const rms = numberFlag(flags, 'roughness-nm', { min: 0 });
  const corr = numberFlag(flags, 'correlation-nm', { min: 0 });
  if (corr !== undefined && rms === undefined) throw new StudyUsageError('--correlation-nm needs --roughness-nm');
  const def: EnsembleDefinition = {
    model,
    window,
    search,
    realisations: ensemble,
    seed: numberFlag(flags, 'seed', { integer: true, min: 0 }) ?? 1,
    roughness: rms === undefined ? null : { rmsNm: rms, correlationNm: corr ?? 0 },
    jitter,
    disorder,
    follow: { energy: numberFlag(flags, 'follow') ?? (window.emin + window.emax) / 2 },
    tolerances: { energy: range(flags, 'tolerance-energy'), width: range(flags, 'tolerance-width'), quality: range(flags, 'tolerance-q') },
    bins: numberFlag(flags, 'bins', { integer: true, min: 1 }),
  };
  try {
    return ensembleReport(runEnsemble(def));
  } catch (err) {
    if (err instanceof RangeError) throw new StudyUsageError(err.message);
    throw err;
  }
}
