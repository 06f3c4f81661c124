/**
 * The engine from the command line: reads a cavity model document (JSON) and
 * prints results as JSON on stdout. Errors go to stderr with a non-zero exit
 * status (2: bad command or flag, 1: bad file, invalid model, failed computation).
 *
 *   npm run engine -- info MODEL.json [--energy E]
 *   npm run engine -- transmission MODEL.json --emin X --emax Y --points N [--refine MAXPOINTS] [--tolerance T] [--interpolate] [--spectral]
 *   npm run engine -- poles MODEL.json --emin X --emax Y --gmax Z [--probes P] [--seed S] [--max-nodes M] [--modes]
 *   npm run engine -- closed MODEL.json --target E --count K [--vectors]
 *   npm run engine -- current MODEL.json (--pole-near E | --energy E --lead L --channel M) [--window W] [--gmax G]
 *   npm run engine -- husimi MODEL.json (--pole-near E | --energy E --lead L --channel M) [--sigma-nm S] [--directions N] [--grid-nm G] [--threshold F]
 *   npm run engine -- study MODEL.json (--param PATH --values FROM:TO:COUNT | --ensemble N …) --emin A --emax B --gmax G (scripts/engine-study.ts)
 *   npm run engine -- fit DATA.csv --x COLUMN --y COLUMN --shape bw|fano|thermal|thermal-fano [...] (scripts/engine-fit.ts)
 *
 * --lead is a lead's name or its index (0-based, in the model's order); --channel is 1-based.
 * Energies and widths in meV, lifetimes in ps.
 */
import { frequencyOfWavenumberSquared, microwaveFigures, twoDimensionalLimitGhz } from '../shared/units/microwave';
import { readFileSync } from 'node:fs';
import { buildCavitySystem, EffectiveHamiltonian, InvalidModelError, type CavitySystem } from '../shared/engine/effective-hamiltonian';
import { resolveState, type StateRequest } from '../shared/engine/mode-state';
import { currentReport, husimiReport } from '../shared/engine/mode-maps';
import { transmissionSweep } from '../shared/engine/transmission';
import { closedCavityEigenvalues } from '../shared/engine/closed-cavity';
import { formatIssuePath } from '../shared/model/cavity-model';
import { validateCavityModel } from '../shared/model/model-validation';
import { deriveFiguresWithLeads } from '../shared/engine/lead-channel-ranges';
import { lifetimeFromWidth } from '../shared/units/constants';
import { FitFileError, FitUsageError, runFitCommand } from './engine-fit';
import { runStudyCommand, StudyUsageError } from './engine-study';

class UsageError extends Error {}

const USAGE = `usage:
  engine info MODEL.json [--energy E]
  engine transmission MODEL.json --emin X --emax Y --points N [--refine MAXPOINTS] [--tolerance T] [--interpolate] [--spectral]
  engine poles MODEL.json --emin X --emax Y --gmax Z [--probes P] [--seed S] [--max-nodes M] [--modes]
  engine closed MODEL.json --target E --count K [--vectors]
  engine current MODEL.json (--pole-near E | --energy E --lead L --channel M) [--window W] [--gmax G]
  engine husimi MODEL.json (--pole-near E | --energy E --lead L --channel M) [--sigma-nm S] [--directions N] [--grid-nm G] [--threshold F]
  engine study MODEL.json --param PATH --values FROM:TO:COUNT|V1,V2,... --emin A --emax B --gmax G
      [--param2 PATH --values2 ...] [--probes P] [--seed S] [--max-nodes M] [--map-points N]
  engine study MODEL.json --ensemble N --emin A --emax B --gmax G [--roughness-nm R --correlation-nm L]
      [--seed S] [--follow E] [--jitter PATH:SIGMA[:dimension|lead-width|gate-offset]]... [--disorder]
      [--tolerance-energy A:B] [--tolerance-width A:B] [--tolerance-q A:B] [--bins K]
  engine fit DATA.csv --x COLUMN --y COLUMN --shape bw|fano|thermal|thermal-fano
      [--x-unit meV|ueV|mV --lever-arm MEV_PER_MV] [--y-unit T|e2h|2e2h|uS] [--temperature-mK T]
      [--range A:B] [--lines FIRST:LAST] [--peaks N] [--background constant|linear] [--curve]
(energies in meV, lengths in nm; --lead is a name or a 0-based index, --channel 1-based;
 for a microwave model energies are k² in mm⁻² and lengths mm, and poles, transmission and
 closed print frequencies in GHz, widths in MHz, lifetimes in ns and Q beside them)`;

const STATE_FLAGS = ['pole-near', 'energy', 'channel', 'window', 'gmax'];

const FLAGS: Record<string, { numbers: string[]; switches: string[]; required: string[]; strings?: string[] }> = {
  info: { numbers: ['energy'], switches: [], required: [] },
  transmission: { numbers: ['emin', 'emax', 'points', 'refine', 'tolerance'], switches: ['interpolate', 'spectral'], required: ['emin', 'emax', 'points'] },
  poles: { numbers: ['emin', 'emax', 'gmax', 'probes', 'seed', 'max-nodes'], switches: ['modes'], required: ['emin', 'emax', 'gmax'] },
  closed: { numbers: ['target', 'count'], switches: ['vectors'], required: ['target', 'count'] },
  current: { numbers: STATE_FLAGS, switches: [], required: [], strings: ['lead'] },
  husimi: { numbers: [...STATE_FLAGS, 'sigma-nm', 'directions', 'grid-nm', 'threshold'], switches: [], required: [], strings: ['lead'] },
};

function parseArgs(argv: string[]): { command: string; file: string; numbers: Record<string, number>; switches: Set<string>; strings: Record<string, string> } {
  const [command, file, ...rest] = argv;
  if (!command || command === '--help' || command === '-h') throw new UsageError('no command given');
  const spec = FLAGS[command];
  if (!spec) throw new UsageError(`unknown command '${command}' (expected ${[...Object.keys(FLAGS), 'study', 'fit'].join(', ')})`);
  if (!file || file.startsWith('--')) throw new UsageError(`'${command}' needs a model file`);
  const numbers: Record<string, number> = {};
  const switches = new Set<string>();
  const strings: Record<string, string> = {};
  for (let k = 0; k < rest.length; k++) {
    const arg = rest[k];
    if (!arg.startsWith('--')) throw new UsageError(`unexpected argument '${arg}'`);
    const name = arg.slice(2);
    if (spec.switches.includes(name)) {
      switches.add(name);
      continue;
    }
    if (spec.strings?.includes(name)) {
      const text = rest[++k];
      if (text === undefined || text.trim() === '') throw new UsageError(`--${name} needs a value`);
      strings[name] = text;
      continue;
    }
    if (!spec.numbers.includes(name)) throw new UsageError(`unknown flag --${name} for '${command}'`);
    const text = rest[++k];
    const value = Number(text);
    if (text === undefined || text.trim() === '' || !Number.isFinite(value)) throw new UsageError(`--${name} needs a number, got '${text ?? ''}'`);
    numbers[name] = value;
  }
  for (const name of spec.required) if (!(name in numbers)) throw new UsageError(`'${command}' needs --${name}`);
  return { command, file, numbers, switches, strings };
}

/** --pole-near E, or --energy E --lead L --channel M (exactly one of the two). */
function stateRequest(system: CavitySystem, numbers: Record<string, number>, strings: Record<string, string>): StateRequest {
  const scattering = 'energy' in numbers || 'lead' in strings || 'channel' in numbers;
  if ('pole-near' in numbers) {
    if (scattering) throw new UsageError('give either --pole-near or --energy with --lead and --channel, not both');
    return { kind: 'pole-near', near: numbers['pole-near'], window: numbers.window, gammaMax: numbers.gmax };
  }
  if (!scattering) throw new UsageError('give --pole-near E, or --energy E --lead L --channel M');
  for (const f of ['energy', 'channel']) if (!(f in numbers)) throw new UsageError(`a scattering state needs --${f}`);
  if (!('lead' in strings)) throw new UsageError('a scattering state needs --lead (a name or a 0-based index)');
  const byName = system.leads.findIndex((l) => l.name === strings.lead);
  const lead = byName >= 0 ? byName : /^\d+$/.test(strings.lead) ? Number(strings.lead) : -1;
  if (lead < 0 || lead >= system.leads.length) {
    throw new UsageError(`--lead ${strings.lead}: no such lead (the model has ${system.leads.map((l, k) => `${k} = ${l.name}`).join(', ') || 'no leads'})`);
  }
  return { kind: 'scattering', energy: numbers.energy, lead, channel: integer(numbers, 'channel', 1) };
}

/** The lattice, grid labels and positions (nm) of the unknowns, for output off the square lattice. */
function sitePositions(system: CavitySystem) {
  return {
    lattice: system.lattice.kind,
    sites: { i: Array.from(system.sites.i), j: Array.from(system.sites.j) },
    positions: { x: Array.from(system.lattice.positions.x), y: Array.from(system.lattice.positions.y) },
  };
}

function readModel(file: string): unknown {
  let text: string;
  try {
    text = readFileSync(file, 'utf8');
  } catch (err) {
    throw new Error(`cannot read ${file}: ${(err as Error).message}`, { cause: err });
  }
  try {
    return JSON.parse(text);
  } catch (err) {
    throw new Error(`${file} is not valid JSON: ${(err as Error).message}`, { cause: err });
  }
}

function integer(numbers: Record<string, number>, name: string, min: number): number {
  const v = numbers[name];
  if (!Number.isInteger(v) || v < min) throw new UsageError(`--${name} must be an integer ≥ ${min}, got ${v}`);
  return v;
}

async function run(argv: string[]): Promise<unknown> {
  if (argv[0] === 'fit') return runFitCommand(argv[1], argv.slice(2));
  if (argv[0] === 'study') {
    if (!argv[1] || argv[1].startsWith('--')) throw new StudyUsageError("'study' needs a model file");
    return runStudyCommand(readModel(argv[1]), argv.slice(2));
  }
  const { command, file, numbers, switches, strings } = parseArgs(argv);
  const doc = readModel(file);
  if (command === 'info') {
    const checked = validateCavityModel(doc);
    if (!checked.ok) throw new InvalidModelError(checked.issues);
    const sys = buildCavitySystem(doc);
    return {
      model: checked.model.name,
      ...deriveFiguresWithLeads(checked.model, checked.siteCount, numbers.energy),
      thresholds: new EffectiveHamiltonian(sys).thresholds,
    };
  }
  const system = buildCavitySystem(doc);
  // Microwave mode: every energy is k² (mm⁻²); frequencies in GHz are given beside them.
  const physics = system.model.physics;
  const eps = physics.kind === 'microwave' ? physics.permittivity : 1;
  const ghz = (k2: number) => frequencyOfWavenumberSquared(k2, eps);
  const microwave =
    physics.kind === 'microwave'
      ? { microwave: { permittivity: eps, heightMm: physics.height, twoDimensionalLimitGhz: twoDimensionalLimitGhz(physics.height, eps) } }
      : {};
  if (command === 'closed') {
    const res = closedCavityEigenvalues(system.lattice, {
      target: numbers.target,
      count: integer(numbers, 'count', 1),
      vectors: switches.has('vectors'),
    });
    return {
      target: numbers.target,
      energies: res.energies,
      ...(physics.kind === 'microwave' ? { frequenciesGhz: res.energies.map(ghz), units: { energy: 'mm⁻² (k²)', frequency: 'GHz' }, ...microwave } : {}),
      residuals: res.residuals,
      steps: res.steps,
      vectors: res.vectors?.map((v) => Array.from(v)),
      sites: switches.has('vectors') ? { i: Array.from(system.sites.i), j: Array.from(system.sites.j) } : undefined,
      // Off the square lattice (i, j) are grid labels, not positions: give the positions (nm) too.
      ...(switches.has('vectors') && system.lattice.kind !== 'square' ? sitePositions(system) : {}),
    };
  }
  const op = new EffectiveHamiltonian(system);
  if (command === 'current' || command === 'husimi') {
    const state = resolveState(system, op, stateRequest(system, numbers, strings));
    if (command === 'current') return currentReport(system, state);
    return husimiReport(system, state, {
      sigmaNm: numbers['sigma-nm'],
      directions: numbers.directions === undefined ? undefined : integer(numbers, 'directions', 4),
      gridNm: numbers['grid-nm'],
      peakThreshold: numbers.threshold,
    });
  }
  if (command === 'transmission') {
    const points = integer(numbers, 'points', 2);
    const refine = numbers.refine === undefined ? undefined : { maxPoints: integer(numbers, 'refine', points), tolerance: numbers.tolerance };
    const sweep = transmissionSweep(op, {
      emin: numbers.emin,
      emax: numbers.emax,
      points,
      refine,
      interpolate: switches.has('interpolate'),
      spectral: switches.has('spectral'),
    });
    return {
      leads: system.leads.map((l, k) => ({ name: l.name, side: l.side, width: system.model.leads[k].width })),
      energies: sweep.points.map((p) => p.energy),
      transmission: sweep.points.map((p) => p.transmission),
      reflection: sweep.points.map((p) => p.reflection),
      channels: sweep.points.map((p) => p.channels),
      conductance: sweep.points.map((p) => p.conductance),
      currentResidual: sweep.worstCurrentResidual,
      unitarityResidual: sweep.worstUnitarityResidual,
      gridPoints: sweep.gridPoints,
      budgetExhausted: sweep.budgetExhausted,
      directSolves: sweep.directSolves,
      ...(sweep.interpolation ? { interpolation: sweep.interpolation } : {}),
      ...(sweep.spectral ? { spectral: sweep.spectral } : {}),
      ...(physics.kind === 'microwave'
        ? {
            frequenciesGhz: sweep.points.map((p) => ghz(p.energy)),
            units: { energy: 'mm⁻² (k²)', frequency: 'GHz', conductance: '2e²/h (not meaningful for microwaves: use transmission)' },
            ...microwave,
          }
        : { units: { energy: 'meV', conductance: '2e²/h' } }),
    };
  }
  // poles
  const { findPoles } = await import('../shared/engine/poles');
  const result = findPoles(
    op,
    { emin: numbers.emin, emax: numbers.emax, gammaMax: numbers.gmax },
    {
      probes: numbers.probes === undefined ? undefined : integer(numbers, 'probes', 1),
      seed: numbers.seed,
      maxNodes: numbers['max-nodes'] === undefined ? undefined : integer(numbers, 'max-nodes', 1),
    },
  );
  if (physics.kind === 'microwave') {
    return {
      ...result,
      poles: result.poles.map((p) => {
        const f = microwaveFigures(p.energy, p.width, eps);
        return {
          ...p,
          // Q and τ of the complex frequency f = c√z/(2π√ε_r), not E/Γ and ħ/Γ.
          quality: p.bound ? null : f.quality,
          lifetimePs: p.bound ? null : f.lifetimeNs! * 1e3,
          frequencyGhz: f.frequencyGhz,
          widthMhz: p.bound ? 0 : f.widthMhz,
          lifetimeNs: p.bound ? null : f.lifetimeNs,
          mode: switches.has('modes') ? Array.from(p.mode) : undefined,
        };
      }),
      ...microwave,
      units: {
        energy: 'mm⁻² (k²)',
        width: 'mm⁻² (k²)',
        lifetime: 'ps',
        frequency: 'GHz',
        widthMhz: 'MHz (Γ_f = 2|Im f|)',
        lifetimeNs: 'ns (1/(2πΓ_f))',
        quality: 'Re f/Γ_f',
      },
    };
  }
  return {
    ...result,
    poles: result.poles.map((p) => ({
      ...p,
      lifetimePs: p.bound ? null : lifetimeFromWidth(p.width),
      mode: switches.has('modes') ? Array.from(p.mode) : undefined,
    })),
    // Off the square lattice the modes' entries follow the sites' grid labels: give labels and positions (nm).
    ...(switches.has('modes') && system.lattice.kind !== 'square' ? sitePositions(system) : {}),
    units: { energy: 'meV', width: 'meV', lifetime: 'ps' },
  };
}

run(process.argv.slice(2)).then(
  (out) => {
    process.stdout.write(JSON.stringify(out, null, 2) + '\n');
  },
  (err: unknown) => {
    if (err instanceof UsageError || err instanceof FitUsageError || err instanceof StudyUsageError) {
      process.stderr.write(`engine: ${err.message}\n${USAGE}\n`);
      process.exitCode = 2;
    } else if (err instanceof FitFileError) {
      process.stderr.write(`engine: ${err.message}\n`);
      process.exitCode = 1;
    } else if (err instanceof InvalidModelError) {
      process.stderr.write('engine: invalid model\n' + err.issues.map((i) => `  ${formatIssuePath(i.path)}: ${i.message}`).join('\n') + '\n');
      process.exitCode = 1;
    } else {
      process.stderr.write(`engine: ${(err as Error).message ?? String(err)}\n`);
      process.exitCode = 1;
    }
  },
);
