import { dimensionsText } from './dimensions-text';

describe('dimensionsText', () => {
  it('writes lengths in nm and the area in nm², not the area as a length', () => {
    expect(dimensionsText({ width: 300, height: 200, area: 60000 }, 'electrons')).toBe('width 300 · height 200 nm · area 60000 nm²');
  });

  it('writes a microwave resonator in mm and mm² to four figures (stored as nm and nm²)', () => {
    expect(dimensionsText({ width: 36e6, height: 24e6, area: 864e12 }, 'microwave')).toBe('width 36.00 · height 24.00 mm · area 864.0 mm²');
    expect(dimensionsText({}, 'microwave')).toBe('');
  });
});
