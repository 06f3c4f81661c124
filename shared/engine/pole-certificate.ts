/**
 * The result of a pole search (poles.ts): each found pole assigned to the finished
 * piece whose contour holds it, the pieces' certificates (certified when the
 * argument principle's count equals the poles found inside), and the observables of
 * every pole (contract, "Observables").
 */
import { HBAR_MEV_PS } from '../units/constants';
import type { NonlinearOperator } from './operator';
import { normalise } from './pole-refine';
import { distinctNodes, inside, type FoundPole, type Piece } from './pole-pieces';
import type { CertificatePiece, Pole, PoleSearchResult } from './pole-types';

/**
 * Assembles poles and certificate from the finished pieces. A zero of det T above
 * the real axis is not listed (it makes its piece's count disagree, with a note);
 * poles outside every contour (below the window or beside it) are dropped.
 */
export function assembleCertificate(
  op: NonlinearOperator,
  done: Piece[],
  found: FoundPole[],
  cuts: number[],
  skipped: string[],
): Pick<PoleSearchResult, 'poles' | 'certificate'> {
  const t = op.hopping;
  done.sort((p, q) => p.contour.x0 - q.contour.x0);
  const poles: Pole[] = [];
  const certPieces: CertificatePiece[] = done.map((p) => ({
    emin: p.contour.x0,
    emax: p.contour.x1,
    polesFound: 0,
    windingNumber: p.winding,
    certified: false,
    nodes: distinctNodes(p.contour),
    ...(p.note ? { note: p.note } : {}),
  }));
  const boundTolerance = 1e-10 * t;
  found.sort((p, q) => p.zRe - q.zRe || p.zIm - q.zIm);
  for (const f of found) {
    const k = done.findIndex((p) => p.strip === f.strip && inside(p.contour, f.zRe, f.zIm));
    if (k < 0) continue; // outside every contour (below the window, or beside it)
    certPieces[k].polesFound++;
    if (f.zIm > boundTolerance) {
      // det T has no zeros above the real axis on a correct continuation: say so rather than list it
      certPieces[k].note = `a zero of det T above the real axis at ${f.zRe} + ${f.zIm}i (operator fault?)`;
      continue;
    }
    poles.push(describePole(op, f, k, boundTolerance));
  }
  for (const c of certPieces) c.certified = c.windingNumber !== null && c.windingNumber === c.polesFound;
  const certified = certPieces.length > 0 && certPieces.every((c) => c.certified) && skipped.length === 0;
  const bad = certPieces.filter((c) => !c.certified).length;
  let summary = certified
    ? `${poles.length} pole(s) in ${certPieces.length} piece(s); every count confirmed by the argument principle`
    : `${poles.length} pole(s) in ${certPieces.length} piece(s); ${bad} piece(s) not certified`;
  if (cuts.length)
    summary += `; the contours run through ${cuts.length} channel threshold(s) (square-root panels at each branch point), so no strip is left out`;
  if (skipped.length) summary += `; intervals too narrow to search: ${skipped.join(', ')}`;
  return { poles, certificate: { pieces: certPieces, certified, summary } };
}

/** The reported observables of a refined pole (contract, "Observables"). */
function describePole(op: NonlinearOperator, f: FoundPole, piece: number, boundTolerance: number): Pole {
  const bound = Math.abs(f.zIm) <= boundTolerance;
  const width = bound ? 0 : -2 * f.zIm;
  const z = { re: f.zRe, im: bound ? 0 : f.zIm };
  const psi = f.right;
  let norm2 = 0;
  for (let i = 0; i < psi.length; i++) norm2 += psi[i] * psi[i];
  const partialWidths: number[] = [];
  for (let l = 0; l < op.leadCount; l++) partialWidths.push(op.leadWidthForm(z, f.sheet, l, psi) / norm2);
  const K = petermann(f.left, psi);
  let nearThreshold: Pole['nearThreshold'] = null;
  if (!bound) {
    for (const th of op.thresholds) {
      const d = Math.abs(f.zRe - th);
      if (d < 3 * width && (!nearThreshold || d / width < nearThreshold.distanceInWidths)) {
        nearThreshold = { threshold: th, distanceInWidths: d / width };
      }
    }
  }
  return {
    energy: f.zRe,
    width,
    lifetimePs: bound ? null : HBAR_MEV_PS / width,
    quality: bound ? null : f.zRe / width,
    partialWidths,
    petermann: K,
    residual: f.residual,
    bound,
    nearThreshold,
    sheet: f.sheet.map((row) => row.slice()),
    piece,
    mode: modeImage(op, psi),
  };
}

/** K = (ψ_L†ψ_L)(ψ_R†ψ_R)/|ψ_Lᵀψ_R|². */
function petermann(l: Float64Array, r: Float64Array): number {
  let ll = 0;
  let rr = 0;
  let re = 0;
  let im = 0;
  for (let i = 0; i < r.length; i += 2) {
    ll += l[i] * l[i] + l[i + 1] * l[i + 1];
    rr += r[i] * r[i] + r[i + 1] * r[i + 1];
    re += l[i] * r[i] - l[i + 1] * r[i + 1];
    im += l[i] * r[i + 1] + l[i + 1] * r[i];
  }
  return (ll * rr) / (re * re + im * im);
}

/**
 * ψ normalised to Σ|ψ|² = 1 and rotated so its largest-magnitude site is real
 * positive; ties within 1e-9 relative go to the first site in (i, j) order (contract).
 */
function modeImage(op: NonlinearOperator, psi: Float64Array): Float64Array {
  const out = Float64Array.from(psi);
  normalise(out);
  let maxAbs = 0;
  for (let s = 0; s < op.n; s++) maxAbs = Math.max(maxAbs, Math.hypot(out[2 * s], out[2 * s + 1]));
  let pick = -1;
  for (let s = 0; s < op.n; s++) {
    if (Math.hypot(out[2 * s], out[2 * s + 1]) < maxAbs * (1 - 1e-9)) continue;
    if (pick < 0 || op.sites.i[s] < op.sites.i[pick] || (op.sites.i[s] === op.sites.i[pick] && op.sites.j[s] < op.sites.j[pick])) pick = s;
  }
  const a = Math.hypot(out[2 * pick], out[2 * pick + 1]);
  const cr = out[2 * pick] / a;
  const ci = -out[2 * pick + 1] / a;
  for (let s = 0; s < op.n; s++) {
    const xr = out[2 * s],
      xi = out[2 * s + 1];
    out[2 * s] = xr * cr - xi * ci;
    out[2 * s + 1] = xr * ci + xi * cr;
  }
  out[2 * pick + 1] = 0;
  return out;
}
