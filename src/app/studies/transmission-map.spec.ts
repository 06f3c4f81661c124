import { niceTicks, rowBands } from './transmission-map';

describe('transmission map layout', () => {
  it('puts nice ticks 1, 2 or 5 × 10ⁿ apart inside the range', () => {
    expect(niceTicks(24, 27)).toEqual([24, 24.5, 25, 25.5, 26, 26.5, 27]);
    expect(niceTicks(0, 0.9, 5)).toEqual([0, 0.2, 0.4, 0.6, 0.8]);
    expect(niceTicks(0, 0.9, 4)).toEqual([0, 0.5]);
    expect(niceTicks(-1, 1, 4)).toEqual([-1, -0.5, 0, 0.5, 1]);
    expect(niceTicks(3, 3)).toEqual([3]);
  });

  it('gives each row the band halfway to its neighbours, also for uneven values', () => {
    expect(rowBands([0, 1, 3])).toEqual([
      [-0.5, 0.5],
      [0.5, 2],
      [2, 4],
    ]);
    expect(rowBands([2])).toEqual([[1.5, 2.5]]);
  });
});
