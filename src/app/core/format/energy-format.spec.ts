import { formatDuration, formatLifetime, formatQuality, formatWidth, significant } from './energy-format';

describe('unit formatting', () => {
  it('picks µeV or neV for small widths and meV for large ones', () => {
    expect(formatWidth(2.5)).toBe('2.50 meV');
    expect(formatWidth(0.0004)).toBe('0.400 µeV');
    expect(formatWidth(0.0123)).toBe('12.3 µeV');
    expect(formatWidth(3e-7)).toBe('0.300 neV');
    expect(formatWidth(5e-5)).toBe('50.0 neV');
  });

  it('picks fs, ps, ns or µs for lifetimes and ∞ for a bound state', () => {
    expect(formatLifetime(0.25)).toBe('250 fs');
    expect(formatLifetime(42)).toBe('42.0 ps');
    expect(formatLifetime(2400)).toBe('2.40 ns');
    expect(formatLifetime(3.2e6)).toBe('3.20 µs');
    expect(formatLifetime(null)).toBe('∞');
    expect(formatQuality(null)).toBe('∞');
  });

  it('writes very large or small numbers with a power of ten', () => {
    expect(significant(1.5e7, 3)).toBe('1.50×10⁷');
    expect(significant(-2e-5, 2)).toBe('-2.0×10⁻⁵');
    expect(formatDuration(45)).toBe('45 s');
    expect(formatDuration(600)).toBe('10 min');
  });
});
