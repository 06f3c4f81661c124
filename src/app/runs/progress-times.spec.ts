import { durationText, progressTimes } from './progress-times';

describe('progressTimes', () => {
  const start = '2026-12-02T10:00:00Z';
  const at = (s: number) => Date.parse(start) + s * 1000;

  it('starts from the estimate and moves to the progress so far', () => {
    expect(progressTimes(start, at(10), 0, 100)).toEqual({ elapsed: 10, remaining: 90 });
    // Half done after 60 s: 60 s left by progress, whatever the estimate said.
    const late = progressTimes(start, at(60), 0.5, 100)!;
    expect(late.remaining).toBeCloseTo(60, 9);
    // In between the two are blended: 15 % done after 30 s → 0.5·170 + 0.5·70.
    expect(progressTimes(start, at(30), 0.15, 100)!.remaining).toBeCloseTo(0.5 * 170 + 0.5 * 70, 6);
  });

  it('has no times before the run starts, and no time left without estimate or progress', () => {
    expect(progressTimes(null, at(5), 0, 100)).toBeNull();
    expect(progressTimes(start, at(5), 0, null)).toEqual({ elapsed: 5, remaining: null });
  });

  it('writes durations plainly', () => {
    expect(durationText(45.4)).toBe('45 s');
    expect(durationText(185)).toBe('3 min 05 s');
    expect(durationText(3720)).toBe('1 h 02 min');
  });
});
