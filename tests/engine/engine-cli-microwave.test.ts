import { describe, expect, it } from 'vitest';
import { spawnSync } from 'node:child_process';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';

/**
 * The engine command line on a microwave model (README "Two physics modes"): `poles` gives each
 * pole's complex frequency beside its raw k², `closed` gives the frequencies of the bound modes.
 * The expected figures are computed here from the printed k² by the formulas of the mode, not by
 * the product's own shared/units/microwave.ts:
 *   f − iΓ_f/2 = c·√z/(2π√ε_r) (TM0 field of a flat resonator, ∇²ψ + k²ψ = 0; Jackson, Classical
 *   Electrodynamics, 3rd ed., §8.7, from memory), τ = 1/(2πΓ_f), Q = Re f/Γ_f,
 *   c = 299 792 458 m/s exactly (SI definition of the metre; CODATA) = 299.792458 mm/ns.
 */
const C_MM_PER_NS = 299.792458;
const EPS = 2.2;
const HEIGHT_MM = 3;
const dir = mkdtempSync(join(tmpdir(), 'poleward-cli-mw-'));
const model = join(dir, 'box.json');
writeFileSync(
  model,
  JSON.stringify({
    name: 'small microwave box',
    physics: { kind: 'microwave', permittivity: EPS, height: HEIGHT_MM },
    spacing: 1,
    grid: { nx: 12, ny: 8 },
    shape: { kind: 'rectangle', x0: 0, y0: 0, width: 12, height: 8 },
    leads: [
      { side: 'left', start: 1, width: 3 },
      { side: 'right', start: 4, width: 3 },
    ],
  }),
);

function engine(...args: string[]) {
  const r = spawnSync(process.execPath, ['--import', 'tsx', 'scripts/engine.ts', ...args], { encoding: 'utf8', cwd: process.cwd() });
  return { status: r.status, stdout: r.stdout, stderr: r.stderr };
}

/** √z on the principal branch for z = re − i·half (half ≥ 0), without cancellation: Re from the half-angle form, Im = Im z/(2 Re). */
function sqrtBelowAxis(re: number, half: number): { re: number; im: number } {
  const r = Math.sqrt((Math.hypot(re, half) + re) / 2);
  return { re: r, im: -half / (2 * r) };
}

const close = (got: number, want: number) => expect(Math.abs(got - want)).toBeLessThanOrEqual(1e-9 * Math.abs(want));

describe('engine command line, microwave mode', () => {
  it('prints poles with frequencyGhz, widthMhz, lifetimeNs and quality from the complex k²', () => {
    const r = engine('poles', model, '--emin', '0.6', '--emax', '1.0', '--gmax', '0.3');
    expect(r.status, r.stderr).toBe(0);
    const out = JSON.parse(r.stdout) as {
      poles: { energy: number; width: number; bound: boolean; frequencyGhz: number; widthMhz: number; lifetimeNs: number | null; quality: number | null }[];
      units: Record<string, string>;
      microwave: { twoDimensionalLimitGhz: number };
    };
    const open = out.poles.filter((p) => !p.bound);
    // The two leaky modes of this box in the window (k² ≈ 0.68 and 0.97 mm⁻²; found once by hand).
    expect(open.length).toBeGreaterThanOrEqual(2);
    for (const p of open) {
      const s = sqrtBelowAxis(p.energy, p.width / 2);
      const scale = C_MM_PER_NS / (2 * Math.PI * Math.sqrt(EPS));
      const f = scale * s.re;
      const gammaGhz = 2 * scale * Math.abs(s.im);
      close(p.frequencyGhz, f);
      close(p.widthMhz, gammaGhz * 1e3);
      close(p.lifetimeNs!, 1 / (2 * Math.PI * gammaGhz));
      close(p.quality!, f / gammaGhz);
    }
    expect(out.units.frequency).toBe('GHz');
    // The 2D limit c/(2h√ε_r) (parallel-plate TE1/TM1 cut-off; Pozar, Microwave Engineering, §3.2, from memory).
    close(out.microwave.twoDimensionalLimitGhz, C_MM_PER_NS / (2 * HEIGHT_MM * Math.sqrt(EPS)));
  });

  it("prints the closed resonator's frequenciesGhz beside its k² eigenvalues", () => {
    const r = engine('closed', model, '--target', '0.4', '--count', '3');
    expect(r.status, r.stderr).toBe(0);
    const out = JSON.parse(r.stdout) as { energies: number[]; frequenciesGhz: number[] };
    expect(out.frequenciesGhz).toHaveLength(out.energies.length);
    expect(out.energies.length).toBe(3);
    out.energies.forEach((k2, n) => {
      expect(k2).toBeGreaterThan(0);
      close(out.frequenciesGhz[n], (C_MM_PER_NS * Math.sqrt(k2)) / (2 * Math.PI * Math.sqrt(EPS)));
    });
  });
});
