import { certificateInWords } from './certificate-words';

const piece = (emin: number, emax: number, poles: number, winding: number) => ({
  emin,
  emax,
  polesFound: poles,
  windingNumber: winding,
  certified: poles === winding,
  nodes: 64,
});

describe('certificateInWords', () => {
  it('says every piece is certified when winding numbers equal the poles found', () => {
    const words = certificateInWords({ pieces: [piece(1, 2, 1, 1), piece(2, 3, 0, 0), piece(3, 4, 2, 2)], certified: true, summary: '' });
    expect(words.headline).toBe('3 pieces, every one certified: the winding number equals the poles found.');
    expect(words.problems).toEqual([]);
  });

  it('names the uncertified piece and the mismatch', () => {
    const words = certificateInWords({ pieces: [piece(1, 2, 1, 1), piece(2, 3, 2, 3)], certified: false, summary: '' });
    expect(words.headline).toContain('1 NOT certified');
    expect(words.problems[0]).toContain('Piece 2 (2.000–3.000 meV): winding number 3 but 2 poles found');
  });
});
