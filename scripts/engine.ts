/**
 * The engine from the command line: reads a cavity model document (JSON) and
 * prints results as JSON on stdout. Errors go to stderr with a non-zero exit
 * status (2: bad command or flag, 1: bad file, invalid model, failed computation).
 *
 *   npm run engine -- info MODEL.json [--energy E]
 *   npm run engine -- transmission MODEL.json --emin X --emax Y --points N [--refine MAXPOINTS] [--tolerance T] [--interpolate]
 *   npm run engine -- poles MODEL.json --emin X --emax Y --gmax Z [--probes P] [--seed S] [--max-nodes M] [--modes]
 *   npm run engine -- closed MODEL.json --target E --count K [--vectors]
 *
 * Energies and widths in meV, lifetimes in ps.
 */
import { readFileSync } from 'node:fs';
import { buildCavitySystem, EffectiveHamiltonian, InvalidModelError } from '../shared/engine/effective-hamiltonian';
import { transmissionSweep } from '../shared/engine/transmission';
import { closedCavityEigenvalues } from '../shared/engine/closed-cavity';
import { validateCavityModel, formatIssuePath } from '../shared/model/cavity-model';
import { deriveFigures } from '../shared/model/derived-figures';
import { lifetimeFromWidth } from '../shared/units/constants';

class UsageError extends Error {}

const USAGE = `usage:
  engine info MODEL.json [--energy E]
  engine transmission MODEL.json --emin X --emax Y --points N [--refine MAXPOINTS] [--tolerance T] [--interpolate]
  engine poles MODEL.json --emin X --emax Y --gmax Z [--probes P] [--seed S] [--max-nodes M] [--modes]
  engine closed MODEL.json --target E --count K [--vectors]
(energies in meV)`;

const FLAGS: Record<string, { numbers: string[]; switches: string[]; required: string[] }> = {
  info: { numbers: ['energy'], switches: [], required: [] },
  transmission: { numbers: ['emin', 'emax', 'points', 'refine', 'tolerance'], switches: ['interpolate'], required: ['emin', 'emax', 'points'] },
  poles: { numbers: ['emin', 'emax', 'gmax', 'probes', 'seed', 'max-nodes'], switches: ['modes'], required: ['emin', 'emax', 'gmax'] },
  closed: { numbers: ['target', 'count'], switches: ['vectors'], required: ['target', 'count'] },
};

function parseArgs(argv: string[]): { command: string; file: string; numbers: Record<string, number>; switches: Set<string> } {
  const [command, file, ...rest] = argv;
  if (!command || command === '--help' || command === '-h') throw new UsageError('no command given');
  const spec = FLAGS[command];
  if (!spec) throw new UsageError(`unknown command '${command}' (expected ${Object.keys(FLAGS).join(', ')})`);
  if (!file || file.startsWith('--')) throw new UsageError(`'${command}' needs a model file`);
  const numbers: Record<string, number> = {};
  const switches = new Set<string>();
  for (let k = 0; k < rest.length; k++) {
    const arg = rest[k];
    if (!arg.startsWith('--')) throw new UsageError(`unexpected argument '${arg}'`);
    const name = arg.slice(2);
    if (spec.switches.includes(name)) {
      switches.add(name);
      continue;
    }
    if (!spec.numbers.includes(name)) throw new UsageError(`unknown flag --${name} for '${command}'`);
    const text = rest[++k];
    const value = Number(text);
    if (text === undefined || text.trim() === '' || !Number.isFinite(value)) throw new UsageError(`--${name} needs a number, got '${text ?? ''}'`);
    numbers[name] = value;
  }
  for (const name of spec.required) if (!(name in numbers)) throw new UsageError(`'${command}' needs --${name}`);
  return { command, file, numbers, switches };
}

function readModel(file: string): unknown {
  let text: string;
  try {
    text = readFileSync(file, 'utf8');
  } catch (err) {
    throw new Error(`cannot read ${file}: ${(err as Error).message}`);
  }
  try {
    return JSON.parse(text);
  } catch (err) {
    throw new Error(`${file} is not valid JSON: ${(err as Error).message}`);
  }
}

function integer(numbers: Record<string, number>, name: string, min: number): number {
  const v = numbers[name];
  if (!Number.isInteger(v) || v < min) throw new UsageError(`--${name} must be an integer ≥ ${min}, got ${v}`);
  return v;
}

async function run(argv: string[]): Promise<unknown> {
  const { command, file, numbers, switches } = parseArgs(argv);
  const doc = readModel(file);
  if (command === 'info') {
    const checked = validateCavityModel(doc);
    if (!checked.ok) throw new InvalidModelError(checked.issues);
    const sys = buildCavitySystem(doc);
    return { model: checked.model.name, ...deriveFigures(checked.model, checked.siteCount, numbers.energy), thresholds: new EffectiveHamiltonian(sys).thresholds };
  }
  const system = buildCavitySystem(doc);
  if (command === 'closed') {
    const res = closedCavityEigenvalues(system.lattice, {
      target: numbers.target,
      count: integer(numbers, 'count', 1),
      vectors: switches.has('vectors'),
    });
    return {
      target: numbers.target,
      energies: res.energies,
      residuals: res.residuals,
      steps: res.steps,
      vectors: res.vectors?.map((v) => Array.from(v)),
      sites: switches.has('vectors') ? { i: Array.from(system.sites.i), j: Array.from(system.sites.j) } : undefined,
    };
  }
  const op = new EffectiveHamiltonian(system);
  if (command === 'transmission') {
    const points = integer(numbers, 'points', 2);
    const refine = numbers.refine === undefined ? undefined : { maxPoints: integer(numbers, 'refine', points), tolerance: numbers.tolerance };
    const sweep = transmissionSweep(op, { emin: numbers.emin, emax: numbers.emax, points, refine, interpolate: switches.has('interpolate') });
    return {
      leads: system.leads.map((l) => ({ name: l.name, side: l.side, width: l.mouth.length })),
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
      units: { energy: 'meV', conductance: '2e²/h' },
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
  return {
    ...result,
    poles: result.poles.map((p) => ({
      ...p,
      lifetimePs: p.bound ? null : lifetimeFromWidth(p.width),
      mode: switches.has('modes') ? Array.from(p.mode) : undefined,
    })),
    units: { energy: 'meV', width: 'meV', lifetime: 'ps' },
  };
}

run(process.argv.slice(2)).then(
  (out) => {
    process.stdout.write(JSON.stringify(out, null, 2) + '\n');
  },
  (err: unknown) => {
    if (err instanceof UsageError) {
      process.stderr.write(`engine: ${err.message}\n${USAGE}\n`);
      process.exitCode = 2;
    } else if (err instanceof InvalidModelError) {
      process.stderr.write('engine: invalid model\n' + err.issues.map((i) => `  ${formatIssuePath(i.path)}: ${i.message}`).join('\n') + '\n');
      process.exitCode = 1;
    } else {
      process.stderr.write(`engine: ${(err as Error).message ?? String(err)}\n`);
      process.exitCode = 1;
    }
  },
);
