import { ChangeDetectionStrategy, Component, computed, input } from '@angular/core';
import type { Lead } from '../../../shared/model/cavity-model';
import { maskPath } from './lattice-mask-path';
import { potentialOverlay } from './potential-overlay';

/** Grids up to this many points draw one dot per site so the lattice itself is visible. */
const DOT_LIMIT = 2500;

interface LeadDrawing {
  label: string;
  /** The ribbon outside the grid, in SVG site units. */
  ribbon: { x: number; y: number; w: number; h: number };
  /** The mouth: the line of cavity sites the lead attaches to. */
  mouth: { x1: number; y1: number; x2: number; y2: number };
  labelAt: { x: number; y: number };
  /** Font size that keeps the name inside its ribbon (long names such as "source" overflowed it). */
  labelSize: number;
}

/** Rough advance width of a glyph of the UI font, in font sizes (common practice for sans fonts, no source). */
const GLYPH_WIDTH = 0.6;

/**
 * Live drawing of a cavity model: the site mask, the leads as ribbons leaving the
 * grid and their mouths as bold lines on the cavity edge, with a scale bar in nm.
 * Pure SVG (no canvas), so it renders the same in the browser and in specs.
 */
@Component({
  selector: 'pw-lattice-preview',
  changeDetection: ChangeDetectionStrategy.OnPush,
  template: `
    <svg [attr.viewBox]="viewBox()" preserveAspectRatio="xMidYMid meet" role="img" [attr.aria-label]="description()">
      <rect class="grid" x="0" y="0" [attr.width]="nx()" [attr.height]="ny()" />
      @if (dots(); as list) {
        @for (d of list; track $index) {
          <circle class="site" [attr.cx]="d.x" [attr.cy]="d.y" r="0.36" />
        }
      } @else {
        <path class="mask" [attr.d]="path()" shape-rendering="crispEdges" />
      }
      @for (l of leadDrawings(); track $index) {
        <rect class="lead" [attr.x]="l.ribbon.x" [attr.y]="l.ribbon.y" [attr.width]="l.ribbon.w" [attr.height]="l.ribbon.h" />
        <line class="mouth" [attr.x1]="l.mouth.x1" [attr.y1]="l.mouth.y1" [attr.x2]="l.mouth.x2" [attr.y2]="l.mouth.y2" [attr.stroke-width]="stroke() * 2.5" />
        <text class="lead-label" [attr.x]="l.labelAt.x" [attr.y]="l.labelAt.y" [attr.font-size]="l.labelSize" text-anchor="middle" dominant-baseline="middle">
          <title>Lead {{ l.label }}</title>
          {{ l.label }}
        </text>
      }
      @for (t of termDrawings(); track $index) {
        @switch (t.kind) {
          @case ('block') {
            <rect
              class="term"
              [class.barrier]="t.positive"
              [class.well]="!t.positive"
              [attr.x]="t.x"
              [attr.y]="t.y"
              [attr.width]="t.w"
              [attr.height]="t.h"
              [attr.stroke-width]="stroke()"
            >
              <title>{{ t.label }}</title>
            </rect>
          }
          @case ('gaussian') {
            <circle
              class="term"
              [class.barrier]="t.positive"
              [class.well]="!t.positive"
              [attr.cx]="t.x"
              [attr.cy]="t.y"
              [attr.r]="t.r"
              [attr.stroke-width]="stroke()"
            >
              <title>{{ t.label }}</title>
            </circle>
            <circle class="term-halo" [attr.cx]="t.x" [attr.cy]="t.y" [attr.r]="t.r * 2" [attr.stroke-width]="stroke()" />
          }
        }
        <text class="term-label" [attr.x]="t.labelAt.x" [attr.y]="t.labelAt.y" [attr.font-size]="fontSize() * 0.8" text-anchor="middle">{{ t.short }}</text>
      }
      @if (disorderText(); as d) {
        <text class="term-label" [attr.x]="nx()" [attr.y]="-margin() * 0.3" [attr.font-size]="fontSize() * 0.8" text-anchor="end">{{ d }}</text>
      }
      <g class="scale">
        <line
          [attr.x1]="0"
          [attr.x2]="scaleBar().sites"
          [attr.y1]="ny() + margin() * 0.55"
          [attr.y2]="ny() + margin() * 0.55"
          [attr.stroke-width]="stroke() * 2"
        />
        <text [attr.x]="scaleBar().sites / 2" [attr.y]="ny() + margin() * 0.9" [attr.font-size]="fontSize()" text-anchor="middle">
          {{ scaleBar().label }}
        </text>
      </g>
    </svg>
  `,
  styles: `
    :host {
      display: block;
    }
    svg {
      width: 100%;
      height: 100%;
      max-height: 60vh;
      display: block;
    }
    .grid {
      fill: var(--mat-sys-surface-container-low);
      stroke: var(--mat-sys-outline-variant);
      stroke-width: 0.2%;
      vector-effect: non-scaling-stroke;
    }
    .mask,
    .site {
      fill: var(--mat-sys-primary);
    }
    .lead {
      fill: var(--mat-sys-tertiary-container);
      stroke: var(--mat-sys-tertiary);
      vector-effect: non-scaling-stroke;
    }
    .mouth {
      stroke: var(--mat-sys-tertiary);
      stroke-linecap: butt;
    }
    .lead-label,
    .scale text {
      fill: var(--mat-sys-on-surface);
    }
    .scale line {
      stroke: var(--mat-sys-on-surface);
    }
    .term {
      fill-opacity: 0.28;
      vector-effect: non-scaling-stroke;
    }
    .term.barrier {
      fill: var(--mat-sys-error);
      stroke: var(--mat-sys-error);
    }
    .term.well {
      fill: var(--mat-sys-secondary);
      stroke: var(--mat-sys-secondary);
    }
    .term-halo {
      fill: none;
      stroke: var(--mat-sys-outline);
      stroke-dasharray: 1 1;
      vector-effect: non-scaling-stroke;
    }
    .term-label {
      fill: var(--mat-sys-on-surface);
      paint-order: stroke;
      stroke: var(--mat-sys-surface);
      stroke-width: 0.3;
    }
  `,
})
export class LatticePreview {
  /** Site mask, index i·ny + j; null while the model cannot be rasterised. */
  readonly mask = input.required<Uint8Array | null>();
  readonly nx = input.required<number>();
  readonly ny = input.required<number>();
  /** Lattice spacing a (in lengthUnit), for the scale bar. */
  readonly spacing = input.required<number>();
  /** nm for electrons, mm for a microwave resonator. */
  readonly lengthUnit = input('nm');
  readonly leads = input<readonly Lead[]>([]);
  /** The model's potential terms (document values), drawn over the cavity. */
  readonly potential = input<readonly Record<string, unknown>[]>([]);

  /** Blocks and Gaussian bumps in SVG site units (site i at x = i + 0.5, row j at y = ny − j − 0.5). */
  protected readonly termDrawings = computed(() => potentialOverlay(this.potential(), this.nx(), this.ny(), this.spacing()));
  protected readonly disorderText = computed(() => {
    const d = this.potential().filter((t) => t['kind'] === 'disorder');
    return d.length ? d.map((t) => `disorder W = ${t['strength']} meV, seed ${t['seed']}`).join('; ') : '';
  });

  /** Room around the grid for the lead ribbons and the scale bar, in sites. */
  protected readonly margin = computed(() => Math.max(3, Math.round(Math.max(this.nx(), this.ny()) * 0.14)));
  protected readonly fontSize = computed(() => Math.max(1, this.margin() * 0.32));
  protected readonly stroke = computed(() => Math.max(0.15, Math.max(this.nx(), this.ny()) / 400));

  protected readonly viewBox = computed(() => {
    const m = this.margin();
    return `${-m} ${-m} ${this.nx() + 2 * m} ${this.ny() + 2 * m}`;
  });

  protected readonly path = computed(() => {
    const mask = this.mask();
    return mask ? maskPath(mask, this.nx(), this.ny()) : '';
  });

  protected readonly dots = computed(() => {
    const mask = this.mask();
    const nx = this.nx();
    const ny = this.ny();
    if (!mask || nx * ny > DOT_LIMIT) return null;
    const out: { x: number; y: number }[] = [];
    for (let i = 0; i < nx; i++) for (let j = 0; j < ny; j++) if (mask[i * ny + j]) out.push({ x: i + 0.5, y: ny - 1 - j + 0.5 });
    return out;
  });

  protected readonly leadDrawings = computed<LeadDrawing[]>(() => {
    const nx = this.nx();
    const ny = this.ny();
    const len = this.margin() * 0.8;
    const size = this.fontSize();
    // The name runs along the ribbon's length for side leads and across its width for top/bottom ones.
    const fit = (label: string, room: number) => Math.max(size * 0.45, Math.min(size, (0.9 * room) / (GLYPH_WIDTH * Math.max(1, label.length))));
    return this.leads().map((lead, k): LeadDrawing => {
      const label = lead.name?.trim() || `L${k + 1}`;
      const s = lead.start;
      const w = lead.width;
      switch (lead.side) {
        case 'left': {
          const y = ny - s - w;
          return {
            label,
            labelSize: fit(label, len),
            ribbon: { x: -len, y, w: len, h: w },
            mouth: { x1: 0, y1: y, x2: 0, y2: y + w },
            labelAt: { x: -len / 2, y: y + w / 2 },
          };
        }
        case 'right': {
          const y = ny - s - w;
          return {
            label,
            labelSize: fit(label, len),
            ribbon: { x: nx, y, w: len, h: w },
            mouth: { x1: nx, y1: y, x2: nx, y2: y + w },
            labelAt: { x: nx + len / 2, y: y + w / 2 },
          };
        }
        case 'bottom':
          return {
            label,
            labelSize: fit(label, w),
            ribbon: { x: s, y: ny, w, h: len },
            mouth: { x1: s, y1: ny, x2: s + w, y2: ny },
            labelAt: { x: s + w / 2, y: ny + len / 2 },
          };
        case 'top':
          return {
            label,
            labelSize: fit(label, w),
            ribbon: { x: s, y: -len, w, h: len },
            mouth: { x1: s, y1: 0, x2: s + w, y2: 0 },
            labelAt: { x: s + w / 2, y: -len / 2 },
          };
      }
    });
  });

  /** A round length (1, 2 or 5 × 10^k in the length unit) close to a fifth of the grid width. */
  protected readonly scaleBar = computed(() => {
    const a = this.spacing();
    const target = (this.nx() * a) / 5;
    const pow = 10 ** Math.floor(Math.log10(target));
    const nm = [1, 2, 5, 10].map((f) => f * pow).reduce((best, v) => (Math.abs(v - target) < Math.abs(best - target) ? v : best));
    const unit = this.lengthUnit();
    const label = unit === 'nm' && nm >= 1000 ? `${nm / 1000} µm` : `${nm} ${unit}`;
    return { sites: nm / a, label };
  });

  protected readonly description = computed(
    () => `Lattice of ${this.nx()} × ${this.ny()} sites, spacing ${this.spacing()} ${this.lengthUnit()}, with ${this.leads().length} lead(s)`,
  );
}
