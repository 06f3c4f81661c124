import { ChangeDetectionStrategy, Component, ElementRef, computed, effect, input, signal, viewChild } from '@angular/core';
import { MatButtonModule } from '@angular/material/button';
import { MatIconModule } from '@angular/material/icon';
import { interpolateCividis, interpolateSinebow } from 'd3-scale-chromatic';
import { currentArrows, drawY, glyphPath, scaleBarLength, valleyColour, type ModeMapField } from './mode-map-data';

/** Which layers are drawn and how the background is coloured. */
export interface ModeMapLayers {
  background: 'density' | 'phase' | 'ldos' | 'none';
  current: boolean;
  husimi: boolean;
  peaks: boolean;
}

/** Screen pixels between current arrows, whatever the zoom. */
const ARROW_SPACING_PX = 26;
/** Caption font size as a fraction of the visible width (drawing units are nm). */
const FONT = 1 / 80;
/** Characters of caption text per line at FONT: the line spans 0.96 of the width at about 0.55 em a character. */
const CAPTION_CHARS = 140;

/** Breaks a line at spaces so each piece has at most `max` characters (a longer word stays whole). */
export function wrapLine(line: string, max: number): string[] {
  const out: string[] = [];
  let rest = line;
  while (rest.length > max) {
    const cut = rest.lastIndexOf(' ', max);
    if (cut <= 0) break;
    out.push(rest.slice(0, cut));
    rest = rest.slice(cut + 1);
  }
  out.push(rest);
  return out;
}

function lut(interpolate: (t: number) => string): Uint8ClampedArray {
  const out = new Uint8ClampedArray(256 * 3);
  for (let k = 0; k < 256; k++) {
    const m = /rgb\((\d+),\s*(\d+),\s*(\d+)\)/.exec(interpolate(k / 255));
    if (m) out.set([+m[1], +m[2], +m[3]], 3 * k);
  }
  return out;
}
const CIVIDIS = lut(interpolateCividis);
const SINEBOW = lut(interpolateSinebow);

/**
 * The mode map as one SVG: the background (density |ψ|² or the local density of states
 * in cividis, a perceptually uniform scale readable with the common colour-vision
 * deficiencies and in grey print; or the phase as hue with the density as brightness),
 * current arrows whose spacing follows the zoom, Husimi glyphs (polar plots of P(θ)) and
 * the processed peak arrows, a scale bar and a caption. Wheel or buttons zoom, dragging
 * pans; the SVG (and a PNG drawn from it) is what the export buttons save.
 */
@Component({
  selector: 'pw-mode-map-view',
  changeDetection: ChangeDetectionStrategy.OnPush,
  imports: [MatButtonModule, MatIconModule],
  templateUrl: './mode-map-view.html',
  styleUrl: './mode-map-view.scss',
})
export class ModeMapView {
  readonly field = input.required<ModeMapField>();
  readonly layers = input.required<ModeMapLayers>();
  readonly unit = input('1/ps');
  /** Caption lines drawn under the map (and kept in the exports). */
  readonly caption = input<string[]>([]);
  readonly fileName = input('mode-map');

  private readonly svg = viewChild<ElementRef<SVGSVGElement>>('svg');
  /** Visible window in drawing nm: x, y (top left), width, height. */
  protected readonly view = signal({ x: 0, y: 0, w: 1, h: 1 });
  protected readonly widthPx = signal(640);
  private drag: { x: number; y: number; vx: number; vy: number } | null = null;

  /** Places text laid out at font size 100 at (x, y) with the given font size (drawing units). */
  protected textAt(x: number, y: number, font: number): string {
    return `translate(${x} ${y}) scale(${font / 100})`;
  }

  protected readonly extent = computed(() => {
    const f = this.field();
    return { w: f.nx * f.dx, h: f.ny * f.dy };
  });

  /** Height of the footer (scale bar and caption lines) in drawing units. */
  protected readonly footer = computed(() => this.view().w * FONT * (2.6 + 1.4 * this.wrappedCaption().length) + this.field().dy);

  /** The caption broken into lines that fit the drawing's width (about CAPTION_CHARS characters at FONT). */
  private readonly wrappedCaption = computed(() => this.caption().flatMap((line) => wrapLine(line, CAPTION_CHARS)));

  protected readonly viewBox = computed(() => {
    const v = this.view();
    const f = this.field();
    return `${v.x - 0.5 * f.dx} ${v.y - 0.5 * f.dy} ${v.w} ${v.h + this.footer()}`;
  });

  /**
   * The background as a PNG data URL (one pixel per grid site, stretched to the column and
   * row pitches; on the honeycomb a pixel holds its site's a_CC/2 lift), or null when drawn without.
   */
  protected readonly image = computed(() => {
    const f = this.field();
    const bg = this.layers().background;
    if (bg === 'none' || typeof document === 'undefined') return null;
    const canvas = document.createElement('canvas');
    canvas.width = f.nx;
    canvas.height = f.ny;
    const ctx = canvas.getContext?.('2d');
    if (!ctx) return null;
    const img = ctx.createImageData(f.nx, f.ny);
    // Outside the cavity: light grey, distinct from zero density (the darkest cividis blue).
    for (let p = 0; p < f.nx * f.ny; p++) img.data.set([206, 210, 214, 255], 4 * p);
    const values = bg === 'ldos' && f.ldos ? f.ldos : f.density;
    let max = 0;
    for (const v of values) max = Math.max(max, v);
    for (let s = 0; s < f.i.length; s++) {
      const v = max > 0 ? Math.sqrt(values[s] / max) : 0;
      const p = 4 * ((f.ny - 1 - f.j[s]) * f.nx + f.i[s]);
      if (bg === 'phase') {
        const k = Math.round(((f.phase[s] / (2 * Math.PI) + 1) % 1) * 255);
        img.data.set([SINEBOW[3 * k] * v, SINEBOW[3 * k + 1] * v, SINEBOW[3 * k + 2] * v, 255], p);
      } else {
        const k = Math.round(v * 255);
        img.data.set([CIVIDIS[3 * k], CIVIDIS[3 * k + 1], CIVIDIS[3 * k + 2], 255], p);
      }
    }
    ctx.putImageData(img, 0, 0);
    return canvas.toDataURL('image/png');
  });

  /** Columns and rows per arrow block: the arrows stay about ARROW_SPACING_PX apart on screen at any zoom. */
  protected readonly strides = computed(() => {
    const pxPerNm = this.widthPx() / this.view().w;
    const f = this.field();
    return { x: Math.max(1, Math.ceil(ARROW_SPACING_PX / (pxPerNm * f.dx))), y: Math.max(1, Math.ceil(ARROW_SPACING_PX / (pxPerNm * f.dy))) };
  });
  protected readonly stride = computed(() => this.strides().x);

  protected readonly arrows = computed(() => {
    if (!this.layers().current) return [];
    const f = this.field();
    const v = this.view();
    const strides = this.strides();
    const step = Math.min(strides.x * f.dx, strides.y * f.dy);
    // Only the arrows in view (plus a margin) are drawn.
    const inView = (a: { x: number; y: number }) => a.x >= v.x - step && a.x <= v.x + v.w + step && a.y >= v.y - step && a.y <= v.y + v.h + step;
    return currentArrows(f, strides.x, strides.y).filter((a) => a.length >= 0.06 && inView(a)).map((a) => {
      const len = 0.9 * step * a.length;
      const x1 = a.x - 0.5 * len * a.ux;
      const y1 = a.y - 0.5 * len * a.uy;
      const x2 = a.x + 0.5 * len * a.ux;
      const y2 = a.y + 0.5 * len * a.uy;
      const head = Math.max(0.3 * len, 0.06 * step);
      return { x1, y1, x2, y2, head: arrowHead(x2, y2, a.ux, a.uy, head) };
    });
  });

  /** Line width (nm): 1.4 screen pixels, but not thinner than a tenth of the row pitch when zoomed in (0.5 nm at a = 5 nm). */
  protected readonly strokeNm = computed(() => Math.max(0.1 * Math.min(this.field().dx, this.field().dy), 1.4 * (this.view().w / this.widthPx())));

  protected readonly glyphs = computed(() => {
    const h = this.field().husimi;
    if (!h || !this.layers().husimi) return [];
    const f = this.field();
    const spacing = minSpacing(h.x, h.y) || 10 * f.a;
    // On the honeycomb with both valleys shown, each glyph is tinted by its point's valley share.
    const tint = h.valleyShare && h.valley === 'both' ? h.valleyShare : null;
    return Array.from(h.x, (x, p) => ({ d: glyphPath(h, p, x, drawY(f, h.y[p]), 0.48 * spacing), fill: (tint && valleyColour(tint[p])) || '#fe6100' }));
  });

  protected readonly peakArrows = computed(() => {
    const h = this.field().husimi;
    if (!h || !this.layers().peaks) return [];
    const f = this.field();
    const spacing = minSpacing(h.x, h.y) || 10 * f.a;
    return h.peaks
      .filter((q) => h.strength[q.point] > 0.02)
      .map((q) => {
        const len = 0.5 * spacing * Math.sqrt(q.share * h.strength[q.point]);
        const x = h.x[q.point];
        const y = drawY(f, h.y[q.point]);
        const ux = Math.cos(q.angle);
        const uy = -Math.sin(q.angle);
        return { x1: x, y1: y, x2: x + len * ux, y2: y + len * uy, head: arrowHead(x + len * ux, y + len * uy, ux, uy, Math.max(0.3 * len, 0.05 * spacing)), width: 0.4 + 2.5 * q.share };
      });
  });

  protected readonly scaleBar = computed(() => {
    const v = this.view();
    const font = v.w * FONT;
    const len = scaleBarLength(v.w);
    const y = v.y + v.h + 1.3 * font;
    return { x1: v.x + 0.02 * v.w, x2: v.x + 0.02 * v.w + len, y, label: `${len} nm`, font };
  });

  protected readonly captionLines = computed(() => {
    const v = this.view();
    const font = v.w * FONT;
    return this.wrappedCaption().map((text, k) => ({ text, x: v.x + 0.02 * v.w, y: v.y + v.h + (3 + 1.4 * k) * font, font }));
  });

  constructor() {
    effect(() => {
      const e = this.extent();
      this.view.set({ x: 0, y: 0, w: e.w, h: e.h });
    });
    effect((onCleanup) => {
      const el = this.svg()?.nativeElement;
      if (!el || typeof ResizeObserver === 'undefined') return;
      const ro = new ResizeObserver(() => this.widthPx.set(el.clientWidth || 640));
      ro.observe(el);
      onCleanup(() => ro.disconnect());
    });
  }

  protected zoom(factor: number, cx?: number, cy?: number): void {
    const v = this.view();
    const x = cx ?? v.x + v.w / 2;
    const y = cy ?? v.y + v.h / 2;
    const e = this.extent();
    const w = Math.min(e.w * 1.5, Math.max(this.field().dx * 4, v.w * factor));
    const h = (w / v.w) * v.h;
    this.view.set({ x: x - ((x - v.x) * w) / v.w, y: y - ((y - v.y) * h) / v.h, w, h });
  }

  protected reset(): void {
    const e = this.extent();
    this.view.set({ x: 0, y: 0, w: e.w, h: e.h });
  }

  protected onWheel(event: WheelEvent): void {
    event.preventDefault();
    const p = this.toDrawing(event.clientX, event.clientY);
    this.zoom(event.deltaY > 0 ? 1.2 : 1 / 1.2, p?.x, p?.y);
  }

  protected onPointerDown(event: PointerEvent): void {
    const v = this.view();
    this.drag = { x: event.clientX, y: event.clientY, vx: v.x, vy: v.y };
    (event.target as Element).setPointerCapture?.(event.pointerId);
  }

  protected onPointerMove(event: PointerEvent): void {
    if (!this.drag) return;
    const v = this.view();
    const scale = v.w / (this.widthPx() || 640);
    this.view.set({ ...v, x: this.drag.vx - (event.clientX - this.drag.x) * scale, y: this.drag.vy - (event.clientY - this.drag.y) * scale });
  }

  protected onPointerUp(): void {
    this.drag = null;
  }

  protected onKey(event: KeyboardEvent): void {
    const v = this.view();
    const d = 0.1 * v.w;
    const moves: Record<string, () => void> = {
      '+': () => this.zoom(1 / 1.2),
      '=': () => this.zoom(1 / 1.2),
      '-': () => this.zoom(1.2),
      ArrowLeft: () => this.view.set({ ...v, x: v.x - d }),
      ArrowRight: () => this.view.set({ ...v, x: v.x + d }),
      ArrowUp: () => this.view.set({ ...v, y: v.y - d }),
      ArrowDown: () => this.view.set({ ...v, y: v.y + d }),
      '0': () => this.reset(),
    };
    const move = moves[event.key];
    if (move) {
      event.preventDefault();
      move();
    }
  }

  /** The SVG of the current view, standalone (namespaces and sizes set). */
  svgText(): string {
    const el = this.svg()?.nativeElement;
    if (!el) return '';
    const copy = el.cloneNode(true) as SVGSVGElement;
    copy.setAttribute('xmlns', 'http://www.w3.org/2000/svg');
    copy.setAttribute('xmlns:xlink', 'http://www.w3.org/1999/xlink');
    const w = Math.max(640, el.clientWidth || 640);
    const v = this.view();
    copy.setAttribute('width', String(w));
    copy.setAttribute('height', String(Math.round((w * (v.h + this.footer())) / v.w)));
    copy.removeAttribute('class');
    copy.removeAttribute('tabindex');
    return '<?xml version="1.0" encoding="UTF-8"?>\n' + new XMLSerializer().serializeToString(copy);
  }

  protected exportSvg(): void {
    download(new Blob([this.svgText()], { type: 'image/svg+xml' }), `${this.fileName()}.svg`);
  }

  protected exportPng(): void {
    const text = this.svgText();
    const img = new Image();
    img.onload = () => {
      const canvas = document.createElement('canvas');
      canvas.width = img.width * 2;
      canvas.height = img.height * 2;
      const ctx = canvas.getContext('2d')!;
      ctx.fillStyle = '#fff';
      ctx.fillRect(0, 0, canvas.width, canvas.height);
      ctx.drawImage(img, 0, 0, canvas.width, canvas.height);
      canvas.toBlob((blob) => blob && download(blob, `${this.fileName()}.png`), 'image/png');
    };
    img.src = 'data:image/svg+xml;charset=utf-8,' + encodeURIComponent(text);
  }

  private toDrawing(clientX: number, clientY: number): { x: number; y: number } | null {
    const el = this.svg()?.nativeElement;
    const m = el?.getScreenCTM?.();
    if (!el || !m) return null;
    const pt = el.createSVGPoint();
    pt.x = clientX;
    pt.y = clientY;
    const p = pt.matrixTransform(m.inverse());
    return { x: p.x, y: p.y };
  }
}

function arrowHead(x: number, y: number, ux: number, uy: number, size: number): string {
  const bx = x - size * ux;
  const by = y - size * uy;
  const px = -uy * size * 0.5;
  const py = ux * size * 0.5;
  return `M${x.toFixed(2)},${y.toFixed(2)}L${(bx + px).toFixed(2)},${(by + py).toFixed(2)}L${(bx - px).toFixed(2)},${(by - py).toFixed(2)}Z`;
}

function minSpacing(x: Float32Array, y: Float32Array): number {
  let best = Infinity;
  for (let p = 1; p < Math.min(x.length, 400); p++) best = Math.min(best, Math.hypot(x[p] - x[0], y[p] - y[0]) || Infinity);
  return Number.isFinite(best) ? best : 0;
}

function download(blob: Blob, name: string): void {
  const url = URL.createObjectURL(blob);
  const a = document.createElement('a');
  a.href = url;
  a.download = name;
  a.click();
  setTimeout(() => URL.revokeObjectURL(url), 1000);
}
