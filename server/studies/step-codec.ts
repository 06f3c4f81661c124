/**
 * Stored form of a study step's search and continuation: JSON with each mode as
 * base64 of little-endian float32 pairs (re, im), about a third of the size of
 * plain numbers. float32 keeps overlaps to 1e-7, far below the 0.5 they are judged
 * by; energies and widths stay float64.
 */
import type { ContinuedPole, StepPole, StepSearch } from '../../shared/engine/study/study-step.js';

export interface StoredSearch {
  poles: (Omit<StepPole, 'mode'> & { mode: string })[];
  sites: { i: string; j: string; nx: number; ny: number; flux: number };
  certified: boolean;
  summary: string;
  factorisations: number;
  seconds: number;
}

export interface StoredContinuation {
  continued: (Omit<ContinuedPole, 'mode'> & { mode: string })[];
  failures: number;
  factorisations: number;
}

function encodeFloat32(values: ArrayLike<number>): string {
  const f = Float32Array.from(values as ArrayLike<number>);
  return Buffer.from(f.buffer, f.byteOffset, f.byteLength).toString('base64');
}

function decodeFloat32(text: string): Float64Array {
  const buf = Buffer.from(text, 'base64');
  const f = new Float32Array(buf.buffer.slice(buf.byteOffset, buf.byteOffset + buf.byteLength));
  return Float64Array.from(f);
}

function encodeInt32(values: Int32Array): string {
  return Buffer.from(values.buffer, values.byteOffset, values.byteLength).toString('base64');
}

function decodeInt32(text: string): Int32Array {
  const buf = Buffer.from(text, 'base64');
  return new Int32Array(buf.buffer.slice(buf.byteOffset, buf.byteOffset + buf.byteLength));
}

export function encodeSearch(s: StepSearch): StoredSearch {
  return {
    poles: s.poles.map((p) => ({ ...p, mode: encodeFloat32(p.mode) })),
    sites: { i: encodeInt32(s.sites.i), j: encodeInt32(s.sites.j), nx: s.sites.nx, ny: s.sites.ny, flux: s.sites.flux },
    certified: s.certified,
    summary: s.summary,
    factorisations: s.factorisations,
    seconds: s.seconds,
  };
}

export function decodeSearch(s: StoredSearch): StepSearch {
  return {
    poles: s.poles.map((p) => ({ ...p, mode: decodeFloat32(p.mode) })),
    sites: { i: decodeInt32(s.sites.i), j: decodeInt32(s.sites.j), nx: s.sites.nx, ny: s.sites.ny, flux: s.sites.flux },
    certified: s.certified,
    summary: s.summary,
    factorisations: s.factorisations,
    seconds: s.seconds,
  };
}

export function encodeContinuation(c: { continued: ContinuedPole[]; failures: number; factorisations: number }): StoredContinuation {
  return { continued: c.continued.map((p) => ({ ...p, mode: encodeFloat32(p.mode) })), failures: c.failures, factorisations: c.factorisations };
}

export function decodeContinuation(c: StoredContinuation): { continued: ContinuedPole[]; failures: number; factorisations: number } {
  return { continued: c.continued.map((p) => ({ ...p, mode: decodeFloat32(p.mode) })), failures: c.failures, factorisations: c.factorisations };
}
