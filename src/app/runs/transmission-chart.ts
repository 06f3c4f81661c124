import { ChangeDetectionStrategy, Component, computed, input } from '@angular/core';
import { NgxEchartsDirective } from 'ngx-echarts';
import { chartColours } from '../core/charts/chart-colours';
import { type SpectrumView, transmissionOptions } from './transmission-options';
import type { Spectrum } from '../../../shared/api/runs';

/** The transmission spectrum of a run, with its poles marked on the energy axis. */
@Component({
  selector: 'pw-transmission-chart',
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
export class TransmissionChart {
  readonly spectrum = input.required<Spectrum>();
  readonly poles = input<readonly { energy: number }[]>([]);
  readonly thresholds = input<readonly number[]>([]);
  /** Lead names in the engine's lead order: the spectrum names its pairs by index. */
  readonly leadNames = input<readonly string[]>([]);
  /** T or G (and its unit), the residual, reflection. */
  readonly view = input<SpectrumView>({});
  protected readonly label = computed(() => (this.view().quantity === 'conductance' ? 'Conductance spectrum' : 'Transmission spectrum'));

  protected readonly options = computed(() =>
    transmissionOptions(this.spectrum(), this.poles(), this.thresholds(), chartColours(), this.leadNames(), this.view()),
  );
}
