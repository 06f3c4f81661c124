import { describe, expect, it } from 'vitest';
import { spawnSync } from 'node:child_process';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';

const dir = mkdtempSync(join(tmpdir(), 'poleward-study-cli-'));
// A small dot (139 sites): a 30 nm disk between two 4-site leads, with a gate (a Gaussian bump) in its middle.
const box = {
  name: 'dot',
  spacing: 5,
  material: 'gaas',
  grid: { nx: 18, ny: 14 },
  shape: {
    kind: 'union',
    of: [
      { kind: 'disk', cx: 45, cy: 35, radius: 30 },
      { kind: 'rectangle', x0: 0, y0: 25, width: 20, height: 20 },
      { kind: 'rectangle', x0: 70, y0: 25, width: 20, height: 20 },
    ],
  },
  potential: [{ kind: 'gaussian', cx: 45, cy: 35, sigma: 10, amplitude: 0 }],
  leads: [
    { side: 'left', start: 5, width: 4 },
    { side: 'right', start: 5, width: 4 },
  ],
};
const file = join(dir, 'box.json');
writeFileSync(file, JSON.stringify(box));

function engine(...args: string[]) {
  const r = spawnSync(process.execPath, ['--import', 'tsx', 'scripts/engine.ts', ...args], { encoding: 'utf8', cwd: process.cwd() });
  return { status: r.status, stdout: r.stdout, stderr: r.stderr };
}

describe('engine study command', () => {
  it('prints every step and the linked trajectories of a gate sweep', () => {
    const r = engine('study', file, '--param', 'potential.0.amplitude', '--values', '0:0.4:3', '--emin', '24', '--emax', '27', '--gmax', '1');
    expect(r.stderr).toBe('');
    expect(r.status).toBe(0);
    const out = JSON.parse(r.stdout);
    expect(out.steps).toHaveLength(3);
    out.steps.forEach((s: { values: number[] }, k: number) => expect(Math.abs(s.values[0] - 0.2 * k)).toBeLessThan(1e-12));
    const poles = out.steps.reduce((n: number, s: { poles: unknown[] }) => n + s.poles.length, 0);
    const points = out.lines[0].trajectories.reduce((n: number, t: { points: unknown[] }) => n + t.points.length, 0);
    // Every pole of every step lies on exactly one trajectory.
    expect(poles).toBeGreaterThan(0);
    expect(points).toBe(poles);
    expect(typeof out.fullSearchFraction).toBe('number');
    // Without --map-points no map is computed.
    expect(out.transmission).toBeNull();
  });

  it('prints the transmission map with --map-points', () => {
    const r = engine(
      'study',
      file,
      '--param',
      'potential.0.amplitude',
      '--values',
      '0,0.4',
      '--emin',
      '24',
      '--emax',
      '27',
      '--gmax',
      '1',
      '--map-points',
      '12',
    );
    expect(r.status).toBe(0);
    const out = JSON.parse(r.stdout);
    expect(out.transmission.energies).toHaveLength(12);
    expect(out.transmission.from).toBe('left0');
    expect(out.transmission.into).toEqual(['right1']);
    out.steps.forEach((s: { transmission: number[] }) => expect(s.transmission).toHaveLength(12));
    const bad = engine('study', file, '--ensemble', '2', '--emin', '24', '--emax', '27', '--gmax', '1', '--map-points', '12');
    expect(bad.status).toBe(2);
    expect(bad.stderr).toMatch(/--map-points/);
  });

  it('prints the samples and statistics of an ensemble', () => {
    const r = engine(
      'study',
      file,
      '--ensemble',
      '3',
      '--roughness-nm',
      '0',
      '--correlation-nm',
      '5',
      '--seed',
      '4',
      '--emin',
      '24',
      '--emax',
      '27',
      '--gmax',
      '1',
      '--tolerance-width',
      '0:',
    );
    expect(r.status).toBe(0);
    const out = JSON.parse(r.stdout);
    expect(out.realisations).toHaveLength(3);
    expect(out.statistics.samples).toHaveLength(3);
    expect(out.statistics.energy.std).toBeLessThanOrEqual(1e-12 * out.statistics.energy.mean);
    expect(out.statistics.yield.fraction).toBe(1);
  });

  it('names a bad path or flag and exits with 2', () => {
    const a = engine('study', file, '--param', 'potential.5.value', '--values', '0:1:2', '--emin', '24', '--emax', '27', '--gmax', '1');
    expect(a.status).toBe(2);
    expect(a.stderr).toMatch(/potential\.5/);
    const b = engine('study', file, '--param', 'field', '--values', '0:1', '--emin', '24', '--emax', '27', '--gmax', '1');
    expect(b.status).toBe(2);
    expect(b.stderr).toMatch(/--values/);
    const c = engine('study', file, '--param', 'field', '--values', '0:1:2', '--emin', '24', '--emax', '27', '--gmax', '1', '--roughness-nm', '1');
    expect(c.status).toBe(2);
    expect(c.stderr).toMatch(/ensemble/);
  });
});
