import type { RunCertificate } from '../../../../shared/api/runs';

/**
 * The run's certificate in plain words. A piece is certified when the winding
 * number of det T(z) around it (the argument principle) equals the number of
 * poles found inside; a piece where they differ may hide a pole, and says so.
 */
export function certificateInWords(certificate: RunCertificate | null): { headline: string; problems: string[] } {
  if (!certificate) return { headline: 'No certificate: the run has not finished a pole search.', problems: [] };
  const pieces = certificate.pieces;
  const n = pieces.length;
  const count = `${n} ${n === 1 ? 'piece' : 'pieces'}`;
  const failed = pieces.map((p, k) => ({ p, k })).filter(({ p }) => !p.certified);
  if (!failed.length && certificate.certified) {
    return {
      headline:
        n === 1
          ? '1 piece, certified: the winding number equals the poles found.'
          : `${count}, every one certified: the winding number equals the poles found.`,
      problems: [],
    };
  }
  const problems = failed.map(({ p, k }) => {
    const range = `${p.emin.toFixed(3)}–${p.emax.toFixed(3)} meV`;
    const why =
      p.windingNumber === null
        ? `the winding number could not be settled (${p.polesFound} ${p.polesFound === 1 ? 'pole' : 'poles'} found), so poles may be missing`
        : p.windingNumber !== p.polesFound
          ? `winding number ${p.windingNumber} but ${p.polesFound} ${p.polesFound === 1 ? 'pole' : 'poles'} found, so ${Math.abs(p.windingNumber - p.polesFound)} may be missing or spurious`
          : 'not certified';
    return `Piece ${k + 1} (${range}): ${why}${p.note ? ` (${p.note})` : ''}.`;
  });
  const headline = failed.length
    ? `${count}, ${failed.length} NOT certified: the poles listed there may be incomplete.`
    : `${count}: the run did not certify its result.`;
  return { headline, problems };
}
