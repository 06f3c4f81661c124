import { maskPath } from './lattice-mask-path';

describe('maskPath', () => {
  it('draws one rectangle per horizontal run, row 0 at the bottom', () => {
    // 3 columns × 2 rows, index i·ny + j: row 0 = sites (0,0),(1,0); row 1 = (0,1),(2,1).
    const mask = new Uint8Array([1, 1, 1, 0, 0, 1]);
    expect(maskPath(mask, 3, 2)).toBe('M0 1h2v1h-2zM0 0h1v1h-1zM2 0h1v1h-1z');
  });
});
