import { TestBed } from '@angular/core/testing';
import type { ModeMapPayload } from '../../../shared/api/mode-maps';
import { decodeModeMap } from './mode-map-data';
import { ModeMapView, wrapLine } from './mode-map-view';

function b64(values: number[]): string {
  const bytes = new Uint8Array(Float32Array.from(values).buffer);
  return btoa(String.fromCharCode(...bytes));
}

/** The demo graphene dot's size: a 14 × 6 honeycomb grid, a_CC = 0.142 nm, every site set, current +x everywhere. */
function graphene(): ModeMapPayload {
  const nx = 14;
  const ny = 6;
  const n = nx * ny;
  const vec: number[] = [];
  for (let s = 0; s < n; s++) vec.push(1, 0);
  return {
    engineVersion: 'test',
    state: { kind: 'pole', energy: 300, width: 10, label: '' },
    unit: '1/ps',
    spacingNm: 0.142,
    lattice: 'honeycomb',
    grid: { nx, ny },
    mask: btoa(String.fromCharCode(...new Array<number>(Math.ceil(n / 8)).fill(0xff))),
    psi: b64(new Array(2 * n).fill(0.1)),
    vectors: b64(vec),
    leads: [],
    kirchhoffResidual: null,
    ldos: null,
    husimi: null,
  };
}

describe('ModeMapView on the honeycomb', () => {
  afterEach(() => vi.restoreAllMocks());

  it('stretches the background over nx·Δx × ny·Δy and keeps arrows and strokes at the scale of the sites', () => {
    // jsdom draws no canvas: a stand-in 2D context, enough for the view to make its image element.
    vi.spyOn(HTMLCanvasElement.prototype, 'getContext').mockReturnValue({
      createImageData: (w: number, h: number) => ({ data: new Uint8ClampedArray(4 * w * h) }),
      putImageData: () => undefined,
    } as never);
    vi.spyOn(HTMLCanvasElement.prototype, 'toDataURL').mockReturnValue('data:image/png;base64,');
    const fixture = TestBed.createComponent(ModeMapView);
    fixture.componentRef.setInput('field', decodeModeMap(graphene()));
    fixture.componentRef.setInput('layers', { background: 'density', current: true, husimi: false, peaks: false });
    fixture.detectChanges();
    const el = fixture.nativeElement as HTMLElement;
    const dx = (Math.sqrt(3) / 2) * 0.142;
    const dy = 1.5 * 0.142;
    const image = el.querySelector('[data-test="layer-density"]')!;
    expect(+image.getAttribute('width')!).toBeCloseTo(14 * dx, 6);
    expect(+image.getAttribute('height')!).toBeCloseTo(6 * dy, 6);
    expect(+image.getAttribute('x')!).toBeCloseTo(-dx / 2, 6);
    const lines = Array.from(el.querySelectorAll('[data-test="layer-current"] line'));
    expect(lines.length).toBeGreaterThan(0);
    for (const line of lines) {
      // Every arrow lies inside the drawn cavity (plus half a pitch)…
      for (const a of ['x1', 'x2']) expect(Math.abs(+line.getAttribute(a)! - 7 * dx + dx / 2)).toBeLessThanOrEqual(7 * dx);
      for (const a of ['y1', 'y2']) expect(Math.abs(+line.getAttribute(a)! - 3 * dy + dy / 2)).toBeLessThanOrEqual(3 * dy);
      // …and no stroke is wider than a row pitch (a floor of 0.5 nm drowned this 0.85 nm tall dot in black).
      expect(+line.getAttribute('stroke-width')!).toBeLessThan(dy);
    }
    const [, , w, h] = el.querySelector('svg')!.getAttribute('viewBox')!.split(' ').map(Number);
    expect(w).toBeCloseTo(14 * dx, 6);
    expect(h).toBeGreaterThan(6 * dy);
    // Caption and scale-bar text: laid out at font size 100 and scaled to a fraction of the
    // 2 nm drawing, never given a sub-unit font size (which browsers lay out glyph by glyph).
    const texts = Array.from(el.querySelectorAll('g.footer text'));
    expect(texts.length).toBeGreaterThan(0);
    for (const t of texts) {
      expect(t.getAttribute('font-size')).toBe('100');
      const scale = Number(/scale\(([^)]+)\)/.exec(t.getAttribute('transform')!)![1]);
      expect(scale * 100).toBeLessThan(w);
      expect(scale).toBeGreaterThan(0);
    }
  });
});

describe('caption lines', () => {
  it('break at spaces so no piece is longer than the width allows, and keep every word', () => {
    const line = 'Husimi, both valleys: angle = ray direction (group velocity) of the valley’s cone; σ = 3.94 nm, 48 directions, grid 3.94 nm, angular resolution ≈ 9.1°';
    const pieces = wrapLine(line, 60);
    expect(pieces.length).toBeGreaterThan(1);
    for (const p of pieces) expect(p.length).toBeLessThanOrEqual(60);
    expect(pieces.join(' ')).toBe(line);
    expect(wrapLine('short', 60)).toEqual(['short']);
    expect(wrapLine('a-very-long-word-without-any-space', 10)).toEqual(['a-very-long-word-without-any-space']);
  });
});
