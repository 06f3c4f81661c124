import { significant } from './energy-format';

/**
 * A model's key dimensions in its own units. They are stored in nm (a microwave model's mm
 * × 10⁶, so one catalogue filter means one length) with the area in nm²: electrons read
 * "width 300 · height 200 nm · area 60000 nm²", a microwave resonator
 * "width 36.00 · height 24.00 mm · area 864.0 mm²".
 */
export function dimensionsText(dims: Record<string, number> | null | undefined, physics: 'electrons' | 'microwave'): string {
  const entries = Object.entries(dims ?? {});
  const mm = physics === 'microwave';
  const lengths = entries.filter(([k]) => k !== 'area').map(([k, v]) => `${k} ${mm ? significant(v / 1e6, 4) : Math.round(v)}`);
  const area = entries.filter(([k]) => k === 'area').map(([, v]) => (mm ? `area ${significant(v / 1e12, 4)} mm²` : `area ${Math.round(v)} nm²`));
  return [lengths.length ? `${lengths.join(' · ')} ${mm ? 'mm' : 'nm'}` : '', ...area].filter(Boolean).join(' · ');
}
