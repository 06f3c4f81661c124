import { ChangeDetectionStrategy, Component, computed, input, signal } from '@angular/core';
import { stepValueText } from './parameter-values';
import { parameterLabel } from './parameter-paths';
import { EnergyPipe } from '../core/format/energy-format';
import { MatButtonModule } from '@angular/material/button';
import { MatButtonToggleModule } from '@angular/material/button-toggle';
import { MatSelectModule } from '@angular/material/select';
import { NgxEchartsDirective } from 'ngx-echarts';
import type { SweepOutcome } from '../../../shared/api/studies';
import { formatEnergy, formatWidth } from '../core/format/energy-format';
import { chartColours } from '../core/charts/chart-colours';
import { StudyStepPanel } from './study-step-panel';
import { type MapRow, TransmissionMap } from './transmission-map';
import { markLabels, markPoint, trajectoryPlaneOptions, trajectoryValueOptions } from './trajectory-options';

/**
 * The outcome of a parameter study: the trajectories in the complex plane coloured by the
 * parameter, E(p) and Γ(p), the marks (crossings, avoided crossings, width exchanges),
 * the steps (click one to open it) and the caution about uncertified steps.
 */
@Component({
  selector: 'pw-sweep-result',
  changeDetection: ChangeDetectionStrategy.OnPush,
  imports: [MatButtonModule, MatButtonToggleModule, MatSelectModule, NgxEchartsDirective, StudyStepPanel, TransmissionMap, EnergyPipe],
  templateUrl: './sweep-result.html',
  styleUrl: './sweep-result.scss',
})
export class SweepResult {
  protected readonly stepValue = stepValueText;
  readonly studyId = input.required<string>();
  readonly outcome = input.required<SweepOutcome>();

  protected readonly markLabels = markLabels;
  protected readonly formatEnergy = formatEnergy;
  protected readonly formatWidth = formatWidth;
  /** Which line of a two-parameter study is shown (one line per value of the second parameter). */
  protected readonly lineIndex = signal(0);
  protected readonly openStep = signal<number | null>(null);

  /** The varied parameter as shown on axes and captions: its path, with its unit where the path fixes one. */
  protected readonly parameter = computed(() => parameterLabel(this.outcome().parameters[0]?.path ?? 'p'));
  protected readonly second = computed(() => {
    const path = this.outcome().parameters[1]?.path;
    return path === undefined ? null : parameterLabel(path);
  });
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

  /** The trajectory followed step by step (its resonance is shown first, with previous / next step). */
  protected readonly follow = signal<number | null>(null);
  protected readonly followed = computed(() => this.line().trajectories.find((t) => t.id === this.follow()) ?? null);
  /** The followed trajectory's point at the open step, and its neighbours along the trajectory. */
  protected readonly followedAt = computed(() => {
    const t = this.followed();
    const k = t ? t.points.findIndex((p) => p.step === this.openStep()) : -1;
    if (!t || k < 0) return null;
    return { trajectory: t.id, pole: t.points[k].pole, previous: t.points[k - 1]?.step ?? null, next: t.points[k + 1]?.step ?? null };
  });

  /** The map's columns and this line's rows, or null when the study has no map (or the model fewer than two leads). */
  protected readonly map = computed(() => {
    const o = this.outcome();
    const m = o.transmission;
    if (!m || m.from === null) return null;
    const n0 = o.parameters[0].values.length;
    const li = Math.min(this.lineIndex(), o.lines.length - 1);
    const rows: MapRow[] = o.steps
      .filter((s) => Math.floor(s.index / n0) === li)
      .map((s) => ({ step: s.index, value: s.values[0], values: s.transmission ?? null }));
    // Steps that ran out of energies but sampled every pole they found: their listed peaks are at full height.
    const sampled = new Set(m.poleSampledSteps ?? []);
    return {
      ...m,
      rows,
      quantity: `T ${m.from} → ${m.into.join(' + ')}`,
      coarseSteps: m.budgetExhaustedSteps.filter((k) => !sampled.has(k)),
      coarseSampledSteps: m.budgetExhaustedSteps.filter((k) => sampled.has(k)),
    };
  });
  /** Whether the study asked for a map that cannot be drawn (no two leads) or was made before maps existed. */
  protected readonly mapAbsence = computed(() => {
    const m = this.outcome().transmission;
    if (m === undefined) return 'This study was computed before transmission maps were added.';
    if (m === null) return 'This study was launched without a transmission map.';
    if (m.from === null) return 'The model has fewer than two leads: there is no transmission to map.';
    return null;
  });

  protected open(step: number): void {
    this.openStep.set(step);
  }

  /** Picks the trajectory to follow; opens its first step when no step of it is open. */
  protected followTrajectory(id: number | null): void {
    this.follow.set(id);
    const t = this.followed();
    if (t && !t.points.some((p) => p.step === this.openStep())) this.openStep.set(t.points[0]?.step ?? null);
  }

  /** A click on a pole point of the plane opens its step and follows its trajectory (the scatter carries [E, Im z, p, trajectory, step]). */
  protected chartClick(event: { seriesName?: string; value?: unknown }): void {
    const v = event.value;
    if (event.seriesName === 'Poles' && Array.isArray(v) && typeof v[4] === 'number') {
      if (typeof v[3] === 'number') this.follow.set(v[3]);
      this.openStep.set(v[4]);
    }
  }
}
