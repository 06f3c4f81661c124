import { expandValues, parseParameterValues, stepValueText } from './parameter-values';

describe('parseParameterValues', () => {
  it('reads FROM:TO:COUNT as a range with both ends included', () => {
    const parsed = parseParameterValues(' 0 : 2 : 5 ');
    expect(parsed).toEqual({ values: { from: 0, to: 2, count: 5 } });
    const values = expandValues((parsed as { values: { from: number; to: number; count: number } }).values);
    expect(values).toHaveLength(5);
    expect(values[0]).toBe(0);
    expect(values[2]).toBeCloseTo(1, 12);
    expect(values[4]).toBeCloseTo(2, 12);
  });

  it('reads a list separated by commas or spaces', () => {
    expect(parseParameterValues('0, 0.5 1;2e-1')).toEqual({ values: { list: [0, 0.5, 1, 0.2] } });
  });

  it('says what is wrong with bad input', () => {
    expect(parseParameterValues('')).toHaveProperty('error');
    expect((parseParameterValues('0:1') as { error: string }).error).toContain('three parts');
    expect((parseParameterValues('0:1:1') as { error: string }).error).toContain('COUNT');
    expect((parseParameterValues('0:1:2.5') as { error: string }).error).toContain('COUNT');
    expect((parseParameterValues('a:1:3') as { error: string }).error).toContain('FROM and TO');
    expect((parseParameterValues('1, x, 2') as { error: string }).error).toContain('"x"');
  });

  it('labels a step value without floating-point noise', () => {
    expect(stepValueText(0.030000000000000006)).toBe('0.03');
    expect(stepValueText(1e-7)).toBe('1e-7');
    expect(stepValueText(12.5)).toBe('12.5');
  });
});
