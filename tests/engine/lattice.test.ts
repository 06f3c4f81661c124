import { describe, expect, it } from 'vitest';
import { EigenvalueDecomposition, Matrix } from 'ml-matrix';
import { applyHamiltonian, buildLattice, hamiltonianCsc } from '../../shared/engine/lattice';
import { rasteriseShape } from '../../shared/model/geometry';

function rectangleLattice(nx: number, ny: number, t: number, flux: number) {
  const mask = rasteriseShape({ kind: 'rectangle', x0: 0, y0: 0, width: nx, height: ny }, nx, ny, 1);
  return buildLattice(mask, nx, ny, t, flux);
}

/** Dense real symmetric embedding [[Re H, −Im H], [Im H, Re H]] of a Hermitian CSC matrix: each eigenvalue twice. */
function denseEmbedding(h: ReturnType<typeof hamiltonianCsc>): Matrix {
  const n = h.n;
  const m = new Matrix(2 * n, 2 * n);
  for (let c = 0; c < n; c++) {
    for (let e = h.colPtr[c]; e < h.colPtr[c + 1]; e++) {
      const r = h.rowIdx[e];
      const re = h.values[2 * e],
        im = h.values[2 * e + 1];
      m.set(r, c, re);
      m.set(r + n, c + n, re);
      m.set(r + n, c, im);
      m.set(r, c + n, -im);
    }
  }
  return m;
}

describe('lattice Hamiltonian', () => {
  it('reproduces the exact hard-wall rectangle spectrum', () => {
    // E_nm = 2t(2 − cos(nπ/(Nx+1)) − cos(mπ/(Ny+1))) (contract, "Closed-cavity limits", exact).
    const nx = 9,
      ny = 6,
      t = 1.7;
    const h = hamiltonianCsc(rectangleLattice(nx, ny, t, 0));
    const eig = new EigenvalueDecomposition(denseEmbedding(h)).realEigenvalues.sort((a, b) => a - b);
    const exact: number[] = [];
    for (let n = 1; n <= nx; n++)
      for (let m = 1; m <= ny; m++) {
        const e = 2 * t * (2 - Math.cos((n * Math.PI) / (nx + 1)) - Math.cos((m * Math.PI) / (ny + 1)));
        exact.push(e, e);
      }
    exact.sort((a, b) => a - b);
    for (let k = 0; k < exact.length; k++) expect(Math.abs(eig[k] - exact[k])).toBeLessThan(1e-12 * 8 * t);
  });

  it('is Hermitian and puts the flux −2πφ through every plaquette', () => {
    const nx = 5,
      ny = 4,
      t = 1,
      flux = 0.0731;
    const lat = rectangleLattice(nx, ny, t, flux);
    const h = hamiltonianCsc(lat);
    const at = (r: number, c: number) => {
      for (let e = h.colPtr[c]; e < h.colPtr[c + 1]; e++) if (h.rowIdx[e] === r) return [h.values[2 * e], h.values[2 * e + 1]];
      return [0, 0];
    };
    for (let c = 0; c < h.n; c++)
      for (let e = h.colPtr[c]; e < h.colPtr[c + 1]; e++) {
        const [ar, ai] = [h.values[2 * e], h.values[2 * e + 1]];
        const [br, bi] = at(c, h.rowIdx[e]);
        expect(Math.abs(ar - br) + Math.abs(ai + bi)).toBeLessThan(1e-15);
      }
    // Phase picked up going counter-clockwise round a plaquette, from arg of −H[s',s]:
    // Aharonov-Bohm phase (q/ħ)∮A·dl with q = −e is −2π·Ba²/(h/e) (any QM text, e.g. Sakurai ch. 2).
    const s = (i: number, j: number) => lat.siteIndex[i * ny + j];
    for (let i = 0; i + 1 < nx; i++)
      for (let j = 0; j + 1 < ny; j++) {
        const loop = [s(i, j), s(i + 1, j), s(i + 1, j + 1), s(i, j + 1), s(i, j)];
        let phase = 0;
        for (let k = 0; k < 4; k++) {
          const [re, im] = at(loop[k + 1], loop[k]);
          phase += Math.atan2(-im, -re);
        }
        const wrapped = Math.atan2(Math.sin(phase + 2 * Math.PI * flux), Math.cos(phase + 2 * Math.PI * flux));
        expect(Math.abs(wrapped)).toBeLessThan(1e-12);
      }
  });

  it('applies H from the bond list exactly as the CSC matrix', () => {
    const mask = rasteriseShape({ kind: 'disk', cx: 6, cy: 5, radius: 4.6 }, 13, 11, 1);
    const lat = buildLattice(mask, 13, 11, 0.9, 0.11, undefined);
    const h = hamiltonianCsc(lat);
    const x = new Float64Array(2 * h.n);
    for (let k = 0; k < x.length; k++) x[k] = Math.cos(0.37 * k * k);
    const y = applyHamiltonian(lat, x);
    const ref = new Float64Array(2 * h.n);
    for (let c = 0; c < h.n; c++)
      for (let e = h.colPtr[c]; e < h.colPtr[c + 1]; e++) {
        const r = h.rowIdx[e];
        ref[2 * r] += h.values[2 * e] * x[2 * c] - h.values[2 * e + 1] * x[2 * c + 1];
        ref[2 * r + 1] += h.values[2 * e] * x[2 * c + 1] + h.values[2 * e + 1] * x[2 * c];
      }
    for (let k = 0; k < y.length; k++) expect(Math.abs(y[k] - ref[k])).toBeLessThan(1e-13);
    // Lexicographic (i, j) numbering of the unknowns.
    for (let k = 1; k < h.n; k++) {
      const before = lat.sites.i[k - 1] * 11 + lat.sites.j[k - 1];
      expect(lat.sites.i[k] * 11 + lat.sites.j[k]).toBeGreaterThan(before);
    }
  });
});
