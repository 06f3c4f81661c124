import { ChangeDetectionStrategy, Component, computed, input, signal } from '@angular/core';
import { MatButtonModule } from '@angular/material/button';
import { NgxEchartsDirective } from 'ngx-echarts';
import type { EnsembleOutcome } from '../../../shared/api/studies';
import { formatEnergy, formatQuality, formatWidth } from '../core/format/energy-format';
import { chartColours } from '../core/charts/chart-colours';
import { StudyStepPanel } from './study-step-panel';
import { histogramOptions } from './trajectory-options';

/**
 * The outcome of a tolerance ensemble: histograms of E, Γ and Q of the followed resonance
 * with mean and spread, the yield against the stated tolerances, sensitivities, and the
 * realisations in which the resonance could not be followed (counted and listed, never dropped).
 */
@Component({
  selector: 'pw-ensemble-result',
  changeDetection: ChangeDetectionStrategy.OnPush,
  imports: [MatButtonModule, NgxEchartsDirective, StudyStepPanel],
  templateUrl: './ensemble-result.html',
  styleUrl: './ensemble-result.scss',
})
export class EnsembleResult {
  readonly studyId = input.required<string>();
  readonly outcome = input.required<EnsembleOutcome>();

  protected readonly formatEnergy = formatEnergy;
  protected readonly formatWidth = formatWidth;
  protected readonly formatQuality = formatQuality;
  protected readonly openStep = signal<number | null>(null);

  protected readonly stats = computed(() => this.outcome().statistics);
  protected readonly notFollowed = computed(() => (this.stats()?.samples ?? []).filter((s) => !s.followed));
  protected readonly uncertified = computed(() => (this.stats()?.samples ?? []).filter((s) => s.followed && s.certified === false).length);
  protected readonly histograms = computed(() => {
    const s = this.stats();
    if (!s) return [];
    const c = chartColours();
    return [
      {
        key: 'energy',
        title: 'E (meV)',
        d: s.energy,
        text: formatEnergy,
        nominal: s.nominal?.energy ?? null,
        options: histogramOptions(s.energy.histogram, 'E (meV)', c),
      },
      {
        key: 'width',
        title: 'Γ (meV)',
        d: s.width,
        text: formatWidth,
        nominal: s.nominal?.width ?? null,
        options: histogramOptions(s.width.histogram, 'Γ (meV)', c),
      },
      {
        key: 'quality',
        title: 'Q',
        d: s.quality,
        text: formatQuality,
        nominal: s.nominal?.quality ?? null,
        options: histogramOptions(s.quality.histogram, 'Q', c),
      },
    ];
  });
}
