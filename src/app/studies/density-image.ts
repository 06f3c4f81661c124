import { ChangeDetectionStrategy, Component, ElementRef, effect, input, viewChild } from '@angular/core';
import { interpolateCividis } from 'd3-scale-chromatic';

/** Pixels per lattice site at most, so small models still give a readable picture. */
const maxScale = 8;
/** Width of the picture at most, in CSS pixels. */
const maxWidth = 320;

/**
 * |ψ|² of one pole on the lattice sites of a study step, as a small image in cividis
 * (perceptually uniform, readable in grey); sites outside the cavity stay transparent.
 * Row j = 0 is drawn at the bottom.
 */
@Component({
  selector: 'pw-density-image',
  changeDetection: ChangeDetectionStrategy.OnPush,
  template: `<canvas #canvas role="img" [attr.aria-label]="label()"></canvas>`,
  styles: `
    :host {
      display: inline-block;
    }
    canvas {
      image-rendering: pixelated;
      border: 1px solid var(--mat-sys-outline-variant);
      max-width: 100%;
    }
  `,
})
export class DensityImage {
  readonly grid = input.required<{ nx: number; ny: number }>();
  readonly sites = input.required<{ i: number[]; j: number[] }>();
  readonly density = input.required<number[]>();
  readonly label = input('Mode density');

  private readonly canvas = viewChild.required<ElementRef<HTMLCanvasElement>>('canvas');

  constructor() {
    effect(() => this.draw());
  }

  private draw(): void {
    const { nx, ny } = this.grid();
    const { i, j } = this.sites();
    const density = this.density();
    const canvas = this.canvas().nativeElement;
    canvas.width = nx;
    canvas.height = ny;
    const scale = Math.max(1, Math.min(maxScale, Math.floor(maxWidth / Math.max(1, nx))));
    canvas.style.width = `${nx * scale}px`;
    canvas.style.height = `${ny * scale}px`;
    const ctx = canvas.getContext('2d');
    if (!ctx) return; // jsdom has no 2D context
    const image = ctx.createImageData(nx, ny);
    let peak = 0;
    for (const d of density) if (d > peak) peak = d;
    for (let k = 0; k < i.length; k++) {
      const x = i[k]!;
      const y = ny - 1 - j[k]!;
      if (x < 0 || x >= nx || y < 0 || y >= ny) continue;
      const m = /rgb\((\d+),\s*(\d+),\s*(\d+)\)/.exec(interpolateCividis(peak > 0 ? (density[k] ?? 0) / peak : 0));
      const at = 4 * (y * nx + x);
      if (m) image.data.set([+m[1]!, +m[2]!, +m[3]!, 255], at);
    }
    ctx.putImageData(image, 0, 0);
  }
}
