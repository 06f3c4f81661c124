import { TestBed } from '@angular/core/testing';
import { rasteriseShape } from '../../../shared/model/geometry';
import { honeycombPlacement } from '../../../shared/model/lattice-geometry';
import { LatticePreview } from './lattice-preview';

function render(inputs: Record<string, unknown>): HTMLElement {
  const fixture = TestBed.createComponent(LatticePreview);
  for (const [k, v] of Object.entries(inputs)) fixture.componentRef.setInput(k, v);
  fixture.detectChanges();
  return fixture.nativeElement as HTMLElement;
}

/** Number of "l" steps (bonds) and "h0" dots in a path. */
const count = (d: string | null | undefined, cmd: 'l' | 'h0') => (d ?? '').split(cmd).length - 1;

describe('LatticePreview', () => {
  const acc = 0.142;
  const nx = 60;
  const ny = 36;
  const disk = { kind: 'disk' as const, cx: 3.7, cy: 3.9, radius: 2.5 };
  const mask = rasteriseShape(disk, nx, ny, acc, honeycombPlacement(acc));
  const atoms = mask.reduce((s, v) => s + v, 0);

  it('draws a graphene flake as its atoms, two sublattices, and the bonds between them', () => {
    const host = render({ mask, nx, ny, spacing: acc, lattice: 'honeycomb' });
    const a = host.querySelector('path.atom-a')!.getAttribute('d');
    const b = host.querySelector('path.atom-b')!.getAttribute('d');
    expect(count(a, 'h0') + count(b, 'h0')).toBe(atoms);
    // A disk many atoms across: every inner atom has three bonds, so the bonds number about 3/2 per atom.
    const bonds = count(host.querySelector('path.bond')!.getAttribute('d'), 'l');
    expect(bonds).toBeGreaterThan(1.3 * atoms);
    expect(bonds).toBeLessThan(1.5 * atoms);
    expect(host.querySelector('path.mask')).toBeNull();
    expect(host.querySelectorAll('circle.site')).toHaveLength(0);
    expect(host.querySelector('svg')!.getAttribute('aria-label')).toContain('Honeycomb');
  });

  it('gives the scale bar in nm at the honeycomb’s size: a fifth of the 7.4 nm wide grid is about 1 or 2 nm', () => {
    const host = render({ mask, nx, ny, spacing: acc, lattice: 'honeycomb' });
    const label = host.querySelector('g.scale text')!.textContent!.trim();
    expect(['1 nm', '2 nm']).toContain(label);
    // The bar's length in drawing units (a_CC) is that length over a_CC.
    const line = host.querySelector('g.scale line')!;
    expect(Number(line.getAttribute('x2'))).toBeCloseTo(Number.parseFloat(label) / acc, 6);
  });

  it('draws zigzag and armchair leads with their own atoms and bonds', () => {
    const leads = [
      { side: 'left', start: 10, width: 6, offset: 0 },
      { side: 'bottom', start: 20, width: 8, offset: 0 },
    ];
    const host = render({ mask, nx, ny, spacing: acc, lattice: 'honeycomb', leads });
    const edges = Array.from(host.querySelectorAll('path.lead-bond')).map((p) => p.getAttribute('data-edge'));
    expect(edges).toEqual(['zigzag', 'armchair']);
    for (const p of Array.from(host.querySelectorAll('path.lead-atom'))) expect(count(p.getAttribute('d'), 'h0')).toBeGreaterThan(0);
    // No square-lattice mouth lines on the honeycomb: the bonded cavity atoms are marked instead.
    expect(host.querySelectorAll('line.mouth')).toHaveLength(0);
  });

  it('places a Gaussian bump at its centre on the honeycomb', () => {
    const potential = [{ kind: 'gaussian', cx: 3.7, cy: 3.9, sigma: 0.5, amplitude: 20 }];
    const host = render({ mask, nx, ny, spacing: acc, lattice: 'honeycomb', potential });
    const c = host.querySelector('circle.term')!;
    // Drawing x = x/a_CC + (√3/4) (half a column); r = σ/a_CC.
    expect(Number(c.getAttribute('cx'))).toBeCloseTo(3.7 / acc + Math.sqrt(3) / 4, 6);
    expect(Number(c.getAttribute('r'))).toBeCloseTo(0.5 / acc, 6);
  });

  it('keeps the square lattice as it was: one dot per site on a small grid, row 0 at the bottom', () => {
    const sq = new Uint8Array(4 * 3);
    sq[0 * 3 + 0] = 1;
    sq[3 * 3 + 2] = 1;
    const host = render({ mask: sq, nx: 4, ny: 3, spacing: 5 });
    const dots = Array.from(host.querySelectorAll('circle.site')).map((c) => [Number(c.getAttribute('cx')), Number(c.getAttribute('cy'))]);
    expect(dots).toEqual([
      [0.5, 2.5],
      [3.5, 0.5],
    ]);
    expect(host.querySelector('path.bond')).toBeNull();
  });
});
