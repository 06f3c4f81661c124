import { MATERIAL_PRESETS } from '../../../../shared/model/materials';
import { materialLabel } from './material-label';

describe('materialLabel', () => {
  it('names every preset by its label, not its id', () => {
    for (const preset of MATERIAL_PRESETS) {
      expect(materialLabel(preset.id)).toBe(preset.label);
      expect(materialLabel(preset.id)).not.toBe(preset.id);
    }
    expect(materialLabel('gaas')).toContain('GaAs');
  });

  it('reads a hand-given mass as "custom m*" and keeps an unknown id as it is', () => {
    expect(materialLabel('custom')).toBe('custom m*');
    expect(materialLabel('honeycomb')).toBe('graphene (honeycomb)');
    expect(materialLabel('gan-wurtzite')).toBe('gan-wurtzite');
    expect(materialLabel('')).toBe('—');
    expect(materialLabel(null)).toBe('—');
  });
});
