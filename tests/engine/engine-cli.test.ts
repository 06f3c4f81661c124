import { describe, expect, it } from 'vitest';
import { spawnSync } from 'node:child_process';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';

const dir = mkdtempSync(join(tmpdir(), 'poleward-cli-'));
const chain = {
  name: 'chain with one impurity',
  spacing: 5,
  material: 'gaas',
  grid: { nx: 9, ny: 1 },
  shape: { kind: 'rectangle', x0: 0, y0: 0, width: 45, height: 5 },
  potential: [{ kind: 'sites', values: [[4, 0, 5]] }],
  leads: [
    { side: 'left', start: 0, width: 1 },
    { side: 'right', start: 0, width: 1 },
  ],
};
const good = join(dir, 'chain.json');
writeFileSync(good, JSON.stringify(chain));
const bad = join(dir, 'bad.json');
writeFileSync(bad, JSON.stringify({ ...chain, leads: [{ side: 'top', start: 20, width: 2 }] }));
const broken = join(dir, 'broken.json');
writeFileSync(broken, '{ "name": ');

function engine(...args: string[]) {
  const r = spawnSync(process.execPath, ['--import', 'tsx', 'scripts/engine.ts', ...args], { encoding: 'utf8', cwd: process.cwd() });
  return { status: r.status, stdout: r.stdout, stderr: r.stderr };
}

describe('engine command line', () => {
  it('prints a transmission sweep as JSON', () => {
    // t = 38.09982/0.067/25 meV; the width-one band is 2t < E < 6t.
    const t = 38.09982 / 0.067 / 25;
    const r = engine('transmission', good, '--emin', String(3 * t), '--emax', String(5 * t), '--points', '5');
    expect(r.status).toBe(0);
    const out = JSON.parse(r.stdout);
    expect(out.energies).toHaveLength(5);
    // One impurity V = 5 meV at E = 4t (k = π/2): T = 1/(1 + (V/2t)²) (closed form, see transmission.test.ts).
    expect(out.transmission[2][0][1] / (1 / (1 + (5 / (2 * t)) ** 2))).toBeCloseTo(1, 9);
    expect(out.currentResidual).toBeLessThan(1e-10);
    // --spectral: the same transmissions to 1e-10, with the spectral summary in the output
    const s = engine('transmission', good, '--emin', String(3 * t), '--emax', String(5 * t), '--points', '5', '--spectral');
    expect(s.status).toBe(0);
    const spectral = JSON.parse(s.stdout);
    expect(spectral.spectral.used).toBe(true);
    spectral.transmission.forEach((m: number[][], k: number) => expect(Math.abs(m[0][1] - out.transmission[k][0][1])).toBeLessThan(1e-10));
  });

  it('reports bad flags, files and models on stderr with a non-zero status', () => {
    const flag = engine('transmission', good, '--emin', 'abc', '--emax', '1', '--points', '5');
    expect(flag.status).toBe(2);
    expect(flag.stderr).toContain('--emin needs a number');
    const missing = engine('closed', good, '--target', '1');
    expect(missing.status).toBe(2);
    expect(missing.stderr).toContain('--count');
    const model = engine('info', bad);
    expect(model.status).toBe(1);
    expect(model.stderr).toContain('leads[0].width');
    const json = engine('info', broken);
    expect(json.status).toBe(1);
    expect(json.stderr).toContain('not valid JSON');
    expect(json.stdout).toBe('');
  });
});
