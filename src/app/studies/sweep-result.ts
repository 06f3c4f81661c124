import { ChangeDetectionStrategy, Component, computed, input, signal } from '@angular/core';
import { MatButtonModule } from '@angular/material/button';
import { MatButtonToggleModule } from '@angular/material/button-toggle';
import { MatSelectModule } from '@angular/material/select';
import { NgxEchartsDirective } from 'ngx-echarts';
import type { SweepOutcome } from '../../../shared/api/studies';
import { formatEnergy, formatWidth } from '../core/format/energy-format';
import { chartColours } from '../core/charts/chart-colours';
import { StudyStepPanel } from './study-step-panel';
import { markLabels, markPoint, trajectoryPlaneOptions, trajectoryValueOptions } from './trajectory-options';

/**
 * The outcome of a parameter study: the trajectories in the complex plane coloured by the
 * parameter, E(p) and Γ(p), the marks (crossings, avoided crossings, width exchanges),
 * the steps (click one to open it) and the caution about uncertified steps.
 */
@Component({
  selector: 'pw-sweep-result',
  changeDetection: ChangeDetectionStrategy.OnPush,
  imports: [MatButtonModule, MatButtonToggleModule, MatSelectModule, NgxEchartsDirective, StudyStepPanel],
  templateUrl: './sweep-result.html',
  styleUrl: './sweep-result.scss',
})
export class SweepResult {
  readonly studyId = input.required<string>();
  readonly outcome = input.required<SweepOutcome>();

  protected readonly markLabels = markLabels;
  protected readonly formatEnergy = formatEnergy;
  protected readonly formatWidth = formatWidth;
  /** Which line of a two-parameter study is shown (one line per value of the second parameter). */
  protected readonly lineIndex = signal(0);
  protected readonly openStep = signal<number | null>(null);

  protected readonly parameter = computed(() => this.outcome().parameters[0]?.path ?? 'p');
  protected readonly second = computed(() => this.outcome().parameters[1]?.path ?? null);
  protected readonly line = computed(
    () => this.outcome().lines[Math.min(this.lineIndex(), this.outcome().lines.length - 1)] ?? { value: null, trajectories: [], marks: [] },
  );
  protected readonly uncertified = computed(() => this.outcome().steps.filter((s) => !s.certified));

  protected readonly planeOptions = computed(() => trajectoryPlaneOptions(this.line(), this.parameter(), chartColours()));
  protected readonly energyOptions = computed(() => trajectoryValueOptions(this.line(), this.parameter(), 'energy', chartColours()));
  protected readonly widthOptions = computed(() => trajectoryValueOptions(this.line(), this.parameter(), 'width', chartColours()));

  protected readonly marks = computed(() =>
    this.line().marks.map((m) => {
      const p = markPoint(this.line(), m);
      return { ...m, value: p?.value ?? null, energy: p?.energy ?? null };
    }),
  );

  protected open(step: number): void {
    this.openStep.set(step);
  }

  /** A click on a pole point of a chart opens its step (the plane's scatter carries the step as its 5th value). */
  protected chartClick(event: { seriesName?: string; value?: unknown }): void {
    const v = event.value;
    if (event.seriesName === 'Poles' && Array.isArray(v) && typeof v[4] === 'number') this.openStep.set(v[4]);
  }
}
