import { ChangeDetectionStrategy, Component, computed, input } from '@angular/core';
import type { Lead } from '../../../shared/model/cavity-model';
import type { LatticeKind } from '../../../shared/model/lattice-geometry';
import { type LeadRibbon, atomPaths, bondPath, drawingFrame, leadRibbon } from './lattice-drawing';
import { countSites, maskPath } from './lattice-mask-path';
import { potentialOverlay } from './potential-overlay';

/** Grids up to this many points draw one dot per site so the lattice itself is visible. */
const DOT_LIMIT = 2500;
/** Honeycomb cavities up to this many atoms draw every atom as a dot; larger ones their bonds only (the dots would merge). */
const ATOM_LIMIT = 8000;

interface LeadDrawing {
  label: string;
  /** The ribbon outside the grid, in SVG site units. */
  ribbon: { x: number; y: number; w: number; h: number };
  /** The mouth: the line of cavity sites the lead attaches to. */
  mouth: { x1: number; y1: number; x2: number; y2: number };
  labelAt: { x: number; y: number };
  /** Font size that keeps the name inside its ribbon (long names such as "source" overflowed it). */
  labelSize: number;
  /** On the honeycomb: the lead's first atoms and bonds (a zigzag or armchair ribbon). */
  lattice: LeadRibbon | null;
}

/** Rough advance width of a glyph of the UI font, in font sizes (common practice for sans fonts, no source). */
const GLYPH_WIDTH = 0.6;

/**
 * Live drawing of a cavity model: the site mask (square lattice) or the atoms and
 * nearest-neighbour bonds at their real positions (honeycomb), the leads as ribbons
 * leaving the grid (on the honeycomb their first atoms and bonds: zigzag or armchair)
 * and their mouths on the cavity edge, the potential terms, and a scale bar in nm.
 * Pure SVG, so it renders the same in the browser and in specs; large lattices stay a
 * handful of elements (one path per layer, lattice-drawing.ts), not one node per site.
 */
@Component({
  selector: 'pw-lattice-preview',
  changeDetection: ChangeDetectionStrategy.OnPush,
  template: `
    <svg [attr.viewBox]="viewBox()" preserveAspectRatio="xMidYMid meet" role="img" [attr.aria-label]="description()">
      <rect class="grid" x="0" y="0" [attr.width]="frame().width" [attr.height]="frame().height" />
      @if (honeycomb(); as h) {
        <path class="bond" [attr.d]="h.bonds" [attr.stroke-width]="h.bondWidth" />
        @if (h.atoms; as atoms) {
          <path class="atom atom-a" [attr.d]="atoms[0]" [attr.stroke-width]="h.atomSize" />
          <path class="atom atom-b" [attr.d]="atoms[1]" [attr.stroke-width]="h.atomSize" />
        }
      } @else if (dots(); as list) {
        @for (d of list; track $index) {
          <circle class="site" [attr.cx]="d.x" [attr.cy]="d.y" r="0.36" />
        }
      } @else {
        <path class="mask" [attr.d]="path()" shape-rendering="crispEdges" />
      }
      @for (l of leadDrawings(); track $index) {
        <rect class="lead" [attr.x]="l.ribbon.x" [attr.y]="l.ribbon.y" [attr.width]="l.ribbon.w" [attr.height]="l.ribbon.h" />
        @if (l.lattice; as r) {
          <path class="lead-bond" [attr.data-edge]="r.edge" [attr.d]="r.bonds" [attr.stroke-width]="honeycomb()?.bondWidth ?? stroke()" />
          <path class="lead-atom" [attr.d]="r.atoms" [attr.stroke-width]="honeycomb()?.atomSize ?? stroke()" />
          <path class="contact" [attr.d]="r.contacts" [attr.stroke-width]="(honeycomb()?.atomSize ?? stroke()) * 1.4" />
        } @else {
          <line
            class="mouth"
            [attr.x1]="l.mouth.x1"
            [attr.y1]="l.mouth.y1"
            [attr.x2]="l.mouth.x2"
            [attr.y2]="l.mouth.y2"
            [attr.stroke-width]="stroke() * 2.5"
          />
        }
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
        <text class="term-label" [attr.x]="frame().width" [attr.y]="-margin() * 0.3" [attr.font-size]="fontSize() * 0.8" text-anchor="end">{{ d }}</text>
      }
      <g class="scale">
        <line
          [attr.x1]="0"
          [attr.x2]="scaleBar().sites"
          [attr.y1]="frame().height + margin() * 0.55"
          [attr.y2]="frame().height + margin() * 0.55"
          [attr.stroke-width]="stroke() * 2"
        />
        <text [attr.x]="scaleBar().sites / 2" [attr.y]="frame().height + margin() * 0.9" [attr.font-size]="fontSize()" text-anchor="middle">
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
    .bond,
    .lead-bond {
      fill: none;
      stroke: var(--mat-sys-primary);
      stroke-linecap: round;
      stroke-linejoin: round;
    }
    .lead-bond {
      stroke: var(--mat-sys-tertiary);
    }
    .atom,
    .lead-atom,
    .contact {
      fill: none;
      stroke-linecap: round;
    }
    .atom-a {
      stroke: var(--mat-sys-primary);
    }
    .atom-b {
      stroke: var(--mat-sys-secondary);
    }
    .lead-atom {
      stroke: var(--mat-sys-tertiary);
    }
    .contact {
      stroke: var(--mat-sys-tertiary);
      stroke-opacity: 0.8;
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
  /** Lattice spacing a, or a_CC on the honeycomb (in lengthUnit), for the positions and the scale bar. */
  readonly spacing = input.required<number>();
  /** square (default) or honeycomb: where the sites sit and which are bonded (shared/model/lattice-geometry.ts). */
  readonly lattice = input<LatticeKind>('square');
  /** nm for electrons, mm for a microwave resonator. */
  readonly lengthUnit = input('nm');
  readonly leads = input<readonly Lead[]>([]);
  /** The model's potential terms (document values), drawn over the cavity. */
  readonly potential = input<readonly Record<string, unknown>[]>([]);

  /** Drawing units: one lattice length (a or a_CC), y down (lattice-drawing.ts). */
  protected readonly frame = computed(() => drawingFrame(this.lattice(), this.spacing() > 0 ? this.spacing() : 1, this.nx(), this.ny()));
  /** Blocks and Gaussian bumps in drawing units. */
  protected readonly termDrawings = computed(() => potentialOverlay(this.potential(), this.frame()));
  protected readonly disorderText = computed(() => {
    const d = this.potential().filter((t) => t['kind'] === 'disorder');
    return d.length ? d.map((t) => `disorder W = ${t['strength']} meV, seed ${t['seed']}`).join('; ') : '';
  });

  /** Room around the grid for the lead ribbons and the scale bar, in drawing units. */
  protected readonly margin = computed(() => {
    const f = this.frame();
    return Math.max(3, Math.round(Math.max(f.width, f.height) * 0.14));
  });
  protected readonly fontSize = computed(() => Math.max(1, this.margin() * 0.32));
  protected readonly stroke = computed(() => Math.max(0.15, Math.max(this.frame().width, this.frame().height) / 400));

  protected readonly viewBox = computed(() => {
    const m = this.margin();
    const f = this.frame();
    return `${-m} ${-m} ${f.width + 2 * m} ${f.height + 2 * m}`;
  });

  protected readonly path = computed(() => {
    const mask = this.mask();
    return mask && this.lattice() === 'square' ? maskPath(mask, this.nx(), this.ny()) : '';
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

  /**
   * The honeycomb's bonds and (up to ATOM_LIMIT atoms) its atoms, sublattice A and B apart;
   * null on the square lattice. Bond and dot sizes in a_CC.
   */
  protected readonly honeycomb = computed(() => {
    const mask = this.mask();
    if (this.lattice() !== 'honeycomb' || !mask) return null;
    const f = this.frame();
    const atoms = countSites(mask) <= ATOM_LIMIT ? atomPaths(mask, this.nx(), this.ny(), f) : null;
    return { bonds: bondPath(mask, this.nx(), this.ny(), f), atoms, bondWidth: atoms ? 0.16 : 0.3, atomSize: 0.55 };
  });

  protected readonly leadDrawings = computed<LeadDrawing[]>(() => {
    const f = this.frame();
    const nx = this.nx();
    const ny = this.ny();
    const len = this.margin() * 0.8;
    const size = this.fontSize();
    const mask = this.mask();
    // The name runs along the ribbon's length for side leads and across its width for top/bottom ones.
    const fit = (label: string, room: number) => Math.max(size * 0.45, Math.min(size, (0.9 * room) / (GLYPH_WIDTH * Math.max(1, label.length))));
    return this.leads().map((lead, k): LeadDrawing => {
      const label = lead.name?.trim() || `L${k + 1}`;
      if (f.kind !== 'square') {
        const r = leadRibbon(lead, mask, nx, ny, f, len);
        const b = r.band;
        const side = lead.side === 'left' || lead.side === 'right';
        const edgeX = lead.side === 'left' ? 0 : f.width;
        const edgeY = lead.side === 'bottom' ? f.height : 0;
        return {
          label,
          labelSize: fit(label, b.w),
          ribbon: b,
          mouth: side ? { x1: edgeX, y1: b.y, x2: edgeX, y2: b.y + b.h } : { x1: b.x, y1: edgeY, x2: b.x + b.w, y2: edgeY },
          labelAt: { x: b.x + b.w / 2, y: b.y + b.h / 2 },
          lattice: r,
        };
      }
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
            lattice: null,
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
            lattice: null,
          };
        }
        case 'bottom':
          return {
            label,
            labelSize: fit(label, w),
            ribbon: { x: s, y: ny, w, h: len },
            mouth: { x1: s, y1: ny, x2: s + w, y2: ny },
            labelAt: { x: s + w / 2, y: ny + len / 2 },
            lattice: null,
          };
        case 'top':
          return {
            label,
            labelSize: fit(label, w),
            ribbon: { x: s, y: -len, w, h: len },
            mouth: { x1: s, y1: 0, x2: s + w, y2: 0 },
            labelAt: { x: s + w / 2, y: -len / 2 },
            lattice: null,
          };
      }
    });
  });

  /** A round length (1, 2 or 5 × 10^k in the length unit) close to a fifth of the grid width. */
  protected readonly scaleBar = computed(() => {
    const f = this.frame();
    const target = (f.width * f.unit) / 5;
    const pow = 10 ** Math.floor(Math.log10(target));
    const nm = [1, 2, 5, 10].map((v) => v * pow).reduce((best, v) => (Math.abs(v - target) < Math.abs(best - target) ? v : best));
    const unit = this.lengthUnit();
    const label = unit === 'nm' && nm >= 1000 ? `${nm / 1000} µm` : `${Number(nm.toPrecision(6))} ${unit}`;
    return { sites: nm / f.unit, label };
  });

  protected readonly description = computed(() =>
    this.lattice() === 'honeycomb'
      ? `Honeycomb lattice of ${this.nx()} × ${this.ny()} grid sites, a_CC = ${this.spacing()} ${this.lengthUnit()}, atoms and bonds drawn, with ${this.leads().length} lead(s)`
      : `Lattice of ${this.nx()} × ${this.ny()} sites, spacing ${this.spacing()} ${this.lengthUnit()}, with ${this.leads().length} lead(s)`,
  );
}
