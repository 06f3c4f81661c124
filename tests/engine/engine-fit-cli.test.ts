// `npm run engine -- fit`: the command line prints the fit as JSON, and refuses bad files
// with the same messages as the API (shared/engine/fit-trace.ts).
import { spawnSync } from 'node:child_process';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { parseTable, selectTrace, TraceError } from '../../shared/engine/fit-trace';

const dir = mkdtempSync(join(tmpdir(), 'poleward-fit-cli-'));
const demo = 'catalogue/traces/hl-rect-r3-100mK.csv';

function engine(...args: string[]) {
  const r = spawnSync(process.execPath, ['--import', 'tsx', 'scripts/engine.ts', ...args], { encoding: 'utf8', cwd: process.cwd() });
  return { status: r.status, stdout: r.stdout, stderr: r.stderr };
}

describe('engine fit', () => {
  it('fits the demo trace (gate voltage with a lever arm, conductance in µS) and prints parameters, errors, χ² and covariance', () => {
    const r = engine(
      'fit',
      demo,
      '--x',
      'gate_mV',
      '--x-unit',
      'mV',
      '--lever-arm',
      '0.08',
      '--y',
      'G_uS',
      '--y-unit',
      'uS',
      '--shape',
      'thermal',
      '--temperature-mK',
      '100',
    );
    expect(r.status, r.stderr).toBe(0);
    const out = JSON.parse(r.stdout);
    expect(out.points).toBe(241);
    expect(out.converged).toBe(true);
    expect(out.parameters.map((p: { name: string }) => p.name)).toEqual(['background', 'E0', 'gamma', 'amplitude']);
    for (const p of out.parameters) expect(p.error).toBeGreaterThan(0);
    expect(out.covariance).toHaveLength(4);
    // Symmetric, diagonal = squared errors.
    expect(Math.abs(out.covariance[1][2] - out.covariance[2][1])).toBeLessThanOrEqual(1e-12 * Math.abs(out.covariance[1][2]) + 1e-30);
    expect(Math.abs(out.covariance[2][2] - out.parameters[2].error ** 2)).toBeLessThan(1e-9 * out.covariance[2][2]);
    // The pole the trace was made from: Γ = 0.02455 meV (catalogue/hl-rect-r3.json, engine output).
    expect(Math.abs(out.peaks[0].width - 0.02455) / 0.02455).toBeLessThan(0.03);
    expect(out.chiSquare).toBeGreaterThan(0);
  });

  it("gives the same range of rows with --range (in the file's x unit) and --lines", () => {
    const r = engine('fit', demo, '--x', 'energy_ueV', '--x-unit', 'ueV', '--y', 'G_uS', '--y-unit', 'uS', '--shape', 'bw', '--range', '3200:3300');
    expect(r.status, r.stderr).toBe(0);
    const out = JSON.parse(r.stdout);
    expect(out.points).toBeLessThan(241);
    const lines = engine('fit', demo, '--x', 'energy_ueV', '--x-unit', 'ueV', '--y', 'G_uS', '--y-unit', 'uS', '--shape', 'bw', '--lines', '5:104');
    expect(JSON.parse(lines.stdout).points).toBe(100);
  });

  it('refuses a bad file with a non-zero exit and the message the API gives', () => {
    const file = join(dir, 'bad.csv');
    const text = 'E,T\n' + Array.from({ length: 12 }, (_, i) => `${1 + i * 0.1},${i === 5 ? 'x1' : 0.5}`).join('\n');
    writeFileSync(file, text);
    let apiMessage = '';
    try {
      selectTrace(parseTable(text), { x: 'E', y: 'T', xUnit: 'meV', yUnit: 'T' });
    } catch (err) {
      apiMessage = (err as TraceError).message;
    }
    expect(apiMessage).toBe('line 7, column "T": "x1" is not a number');
    const r = engine('fit', file, '--x', 'E', '--y', 'T', '--shape', 'bw');
    expect(r.status).toBe(1);
    expect(r.stderr.trim()).toBe(`engine: ${apiMessage}`);
  });

  it('refuses bad flags with exit 2', () => {
    expect(engine('fit', demo, '--x', 'gate_mV', '--y', 'G_uS', '--shape', 'lorentz').status).toBe(2);
    const r = engine('fit', demo, '--x', 'gate_mV', '--x-unit', 'mV', '--y', 'G_uS', '--shape', 'bw');
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(/--x-unit mV needs --lever-arm/);
  });
});
