import { describe, expect, it } from 'vitest';
import { isOverlapping } from '../../server/jobs/run-results.js';
import type { Pole } from '../../shared/engine/pole-types.js';

const pole = (energy: number, width: number, petermann = 1): Pole => ({
  energy,
  width,
  lifetimePs: null,
  quality: null,
  partialWidths: [],
  petermann,
  residual: 0,
  bound: false,
  nearThreshold: null,
  sheet: [],
  piece: 0,
  mode: new Float64Array(0),
});

describe('the overlapping flag', () => {
  it('flags two poles closer than the mean of their widths, not two that are further apart', () => {
    const close = [pole(1.0, 0.1), pole(1.09, 0.1)];
    expect(isOverlapping(close, 0)).toBe(true);
    expect(isOverlapping(close, 1)).toBe(true);
    const apart = [pole(1.0, 0.1), pole(1.11, 0.1)];
    expect(isOverlapping(apart, 0)).toBe(false);
  });

  it('flags a narrow pole on a broad neighbour, and any pole with K above 1.2', () => {
    const flank = [pole(1.0, 1e-6), pole(1.3, 1.0)];
    expect(isOverlapping(flank, 0)).toBe(true);
    expect(isOverlapping([pole(1, 0.01, 1.5)], 0)).toBe(true);
    expect(isOverlapping([pole(1, 0.01, 1.1)], 0)).toBe(false);
  });
});
