import { ChangeDetectionStrategy, Component, computed, input } from '@angular/core';

/** A channel threshold with the lead it belongs to. */
export interface AxisThreshold {
  energy: number;
  lead: string;
}

const WIDTH = 640;
const LEFT = 16;
const RIGHT = 16;

/**
 * The energy window on an axis in meV (GHz for a microwave resonator), with the channel thresholds of the chosen
 * model version as ticks (a window piece never straddles one) and the hopping
 * energy t, above which the lattice stops resembling the continuum.
 */
@Component({
  selector: 'pw-energy-axis',
  changeDetection: ChangeDetectionStrategy.OnPush,
  template: `
    <svg [attr.viewBox]="'0 0 ' + width + ' 74'" role="img" [attr.aria-label]="label()">
      <rect class="band" [attr.x]="x(windowMin())" y="16" [attr.width]="Math.max(1, x(windowMax()) - x(windowMin()))" height="22" />
      <line class="axis" [attr.x1]="left" [attr.x2]="width - right" y1="38" y2="38" />
      @for (t of ticks(); track t) {
        <line class="tick" [attr.x1]="x(t)" [attr.x2]="x(t)" y1="38" y2="43" />
        <text class="tick-label" [attr.x]="x(t)" y="55" text-anchor="middle">{{ t }}</text>
      }
      @for (th of visible(); track $index) {
        <line class="threshold" [attr.x1]="x(th.energy)" [attr.x2]="x(th.energy)" y1="10" y2="38">
          <title>{{ th.lead }}: threshold at {{ th.energy.toFixed(3) }} {{ unit() }}</title>
        </line>
      }
      @if (hopping(); as t) {
        @if (t <= range().max) {
          <line class="hopping" [attr.x1]="x(t)" [attr.x2]="x(t)" y1="4" y2="38" />
          <text class="hopping-label" [attr.x]="x(t) + 3" y="12">t</text>
        }
      }
      <text class="unit" [attr.x]="width - right" y="70" text-anchor="end">{{ unit() === 'GHz' ? 'f (GHz)' : 'E (meV)' }}</text>
    </svg>
    <p class="legend">
      <span class="key band-key"></span> window <span class="key threshold-key"></span> channel thresholds ({{ visible().length }} shown{{
        hidden() ? ', ' + hidden() + ' beyond the axis' : ''
      }})
      @if (hopping()) {
        <span class="key hopping-key"></span> hopping t
      }
    </p>
  `,
  styles: `
    :host {
      display: block;
    }
    svg {
      width: 100%;
      height: auto;
      display: block;
    }
    .band {
      fill: var(--mat-sys-primary-container);
      stroke: var(--mat-sys-primary);
    }
    .axis,
    .tick {
      stroke: var(--mat-sys-on-surface-variant);
    }
    .tick-label,
    .unit {
      font-size: 10px;
      fill: var(--mat-sys-on-surface-variant);
    }
    .threshold {
      stroke: var(--mat-sys-tertiary);
      stroke-width: 1.5;
    }
    .hopping {
      stroke: var(--mat-sys-error);
      stroke-dasharray: 3 2;
    }
    .hopping-label {
      font-size: 10px;
      fill: var(--mat-sys-error);
    }
    .legend {
      font: var(--mat-sys-body-small);
      color: var(--mat-sys-on-surface-variant);
      margin: 2px 0;
    }
    .key {
      display: inline-block;
      width: 12px;
      height: 10px;
      margin: 0 4px 0 10px;
      vertical-align: middle;
    }
    .band-key {
      background: var(--mat-sys-primary-container);
      border: 1px solid var(--mat-sys-primary);
    }
    .threshold-key {
      border-left: 2px solid var(--mat-sys-tertiary);
      width: 0;
    }
    .hopping-key {
      border-left: 2px dashed var(--mat-sys-error);
      width: 0;
    }
  `,
})
export class EnergyAxis {
  readonly emin = input<number | null>(null);
  readonly emax = input<number | null>(null);
  readonly thresholds = input<readonly AxisThreshold[]>([]);
  /** Hopping energy t (meV) of the model version, when known. */
  readonly hopping = input<number | null>(null);
  /** The axis unit: meV, or GHz for a microwave resonator (window and thresholds as frequencies). */
  readonly unit = input<'meV' | 'GHz'>('meV');

  protected readonly width = WIDTH;
  protected readonly left = LEFT;
  protected readonly right = RIGHT;
  protected readonly Math = Math;

  protected readonly windowMin = computed(() => this.emin() ?? 0);
  protected readonly windowMax = computed(() => Math.max(this.emax() ?? 0, this.windowMin()));

  /** From the band bottom (or below the window) to a bit beyond the window. */
  protected readonly range = computed(() => {
    const lo = Math.min(0, this.windowMin());
    const span = Math.max(this.windowMax() - lo, 1e-6);
    return { min: lo, max: this.windowMax() + 0.25 * span };
  });

  protected readonly visible = computed(() => {
    const { min, max } = this.range();
    return this.thresholds().filter((t) => t.energy >= min && t.energy <= max);
  });
  protected readonly hidden = computed(() => this.thresholds().length - this.visible().length);

  protected readonly ticks = computed(() => {
    const { min, max } = this.range();
    const raw = (max - min) / 6;
    const pow = 10 ** Math.floor(Math.log10(raw));
    const step = [1, 2, 5, 10].map((f) => f * pow).find((s) => s >= raw) ?? raw;
    const out: number[] = [];
    for (let v = Math.ceil(min / step) * step; v <= max + 1e-9; v += step) out.push(Number(v.toPrecision(6)));
    return out;
  });

  protected readonly label = computed(
    () => `Energy window ${this.windowMin()} to ${this.windowMax()} meV with ${this.visible().length} channel thresholds on the axis`,
  );

  protected x(energy: number): number {
    const { min, max } = this.range();
    return LEFT + ((energy - min) / (max - min)) * (WIDTH - LEFT - RIGHT);
  }
}
