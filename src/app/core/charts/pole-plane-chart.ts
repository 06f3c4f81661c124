import { ChangeDetectionStrategy, Component, computed, input } from '@angular/core';
import { NgxEchartsDirective } from 'ngx-echarts';
import type { Run } from '../../../../shared/api/runs';
import { searchedWindow } from '../format/window-text';
import { chartColours } from './chart-colours';
import { type PlanePole, polePlaneOptions } from './pole-plane-options';
import { poleWidthOptions } from './pole-width-options';

/** The poles of a run in the complex energy plane, with thresholds and the searched window. */
@Component({
  selector: 'pw-pole-plane-chart',
  changeDetection: ChangeDetectionStrategy.OnPush,
  imports: [NgxEchartsDirective],
  template: `<div class="chart" echarts [options]="options()" [initOpts]="{ renderer: 'svg' }" role="img" [attr.aria-label]="label()"></div>`,
  styles: `
    :host {
      display: block;
    }
    .chart {
      height: 340px;
      width: 100%;
    }
  `,
})
export class PolePlaneChart {
  readonly poles = input.required<readonly PlanePole[]>();
  readonly thresholds = input<readonly number[]>([]);
  /** The run's window as the API sends it (emin, emax and gammaMax or points). */
  readonly window = input<Run['window'] | null>(null);
  readonly highlightId = input<string | null>(null);
  /** The model's lattice-validity limit in the poles' unit; poles above it carry `aboveLimit`. */
  readonly validityLimit = input<number | null>(null);
  /** Unit of E and Γ: meV, or mm⁻² (k²) for a microwave model. */
  readonly unit = input('meV');
  /** 'plane': Re z and Im z, linear; 'width': E and Γ on a log axis. */
  readonly view = input<'plane' | 'width'>('plane');

  protected readonly options = computed(() =>
    (this.view() === 'width' ? poleWidthOptions : polePlaneOptions)({
      poles: this.poles(),
      thresholds: this.thresholds(),
      window: searchedWindow(this.window()),
      highlightId: this.highlightId(),
      validityLimit: this.validityLimit(),
      unit: this.unit(),
      colours: chartColours(),
    }),
  );
  protected readonly label = computed(
    () =>
      `${this.view() === 'width' ? 'Pole widths on a log axis' : 'Complex energy plane'} with ${this.poles().length} pole(s) and ${this.thresholds().length} channel threshold(s)`,
  );
}
