import { ChangeDetectionStrategy, Component, DestroyRef, computed, effect, inject, input, signal, untracked } from '@angular/core';
import { takeUntilDestroyed } from '@angular/core/rxjs-interop';
import { MatButtonModule } from '@angular/material/button';
import { MatButtonToggleModule } from '@angular/material/button-toggle';
import { MatCheckboxModule } from '@angular/material/checkbox';
import { MatMenuModule } from '@angular/material/menu';
import { MatSelectModule } from '@angular/material/select';
import { MatCardModule } from '@angular/material/card';
import { MatIconModule } from '@angular/material/icon';
import { MatProgressBarModule } from '@angular/material/progress-bar';
import { MatTableModule } from '@angular/material/table';
import { MatTooltipModule } from '@angular/material/tooltip';
import { RouterLink } from '@angular/router';
import { type Subscription, interval } from 'rxjs';
import { toSignal } from '@angular/core/rxjs-interop';
import { EnergyPipe, LifetimePipe, QualityPipe, WidthPipe } from '../core/format/energy-format';
import { Auth } from '../core/auth/auth';
import { ErrorReport } from '../core/errors/error-report';
import { CurrentGroup } from '../core/group/current-group';
import { injectCanDesign } from '../core/group/design-permission';
import { certificateInWords } from '../core/format/certificate-words';
import { PolePlaneChart } from '../core/charts/pole-plane-chart';
import { kindLabel, statusLabel, windowText } from './run-labels';
import { RunsApi, finishedStatuses } from './runs-api';
import { stageInWords } from './stage-words';
import { runErrorTone } from './run-error-tone';
import { TransmissionChart } from './transmission-chart';
import { durationText, progressTimes } from './progress-times';
import { exportFileName, polesCsv, polesJson, saveText, spectrumCsv, spectrumJson } from './run-export';
import { type ConductanceUnit, type SpectrumQuantity, conductanceUnitLabels } from './spectrum-curves';
import { spectrumWarnings } from './spectrum-warnings';
import { aboveLimitMeaning, microwaveCells, validitySummary } from './pole-validity';
import type { SpectrumView } from './transmission-options';
import { frequencies, frequencyPole, frequencySpectrum } from './microwave-view';
import { frequencyWindow, frequencyWindowText } from '../core/format/window-text';
import type { RunDetail as RunDetailData } from '../../../shared/api/runs';

/**
 * One run: live progress while it works; afterwards its poles in the complex
 * plane, the transmission spectrum with the poles marked, the certificate in words
 * and a table of the poles with their flags.
 */
@Component({
  selector: 'pw-run-detail',
  changeDetection: ChangeDetectionStrategy.OnPush,
  imports: [
    RouterLink,
    MatButtonModule,
    MatButtonToggleModule,
    MatCheckboxModule,
    MatMenuModule,
    MatSelectModule,
    MatCardModule,
    MatIconModule,
    MatProgressBarModule,
    MatTableModule,
    MatTooltipModule,
    EnergyPipe,
    WidthPipe,
    LifetimePipe,
    QualityPipe,
    PolePlaneChart,
    TransmissionChart,
  ],
  templateUrl: './run-detail.html',
  styleUrl: './run-detail.scss',
})
export class RunDetail {
  readonly runId = input.required<string>();

  private readonly api = inject(RunsApi);
  private readonly auth = inject(Auth);
  private readonly errors = inject(ErrorReport);
  private readonly destroyRef = inject(DestroyRef);
  protected readonly group = inject(CurrentGroup);
  protected readonly canDesign = injectCanDesign();

  /** The peak-fit page on this run's spectrum, with the model (and ε_r of a resonator) for a finer sweep. */
  protected fitLink(r: RunDetailData): Record<string, string | number> {
    const eps = r.microwave?.permittivity;
    return { runId: r.id, modelId: r.modelId, version: r.modelVersion, ...(eps ? { permittivity: eps } : {}) };
  }
  protected readonly kindLabel = kindLabel;
  protected readonly statusLabel = statusLabel;
  protected readonly windowText = windowText;
  protected readonly errorTone = runErrorTone;
  protected readonly aboveLimitMeaning = aboveLimitMeaning;
  protected readonly microwaveCells = microwaveCells;

  protected readonly run = signal<RunDetailData | null>(null);
  protected readonly quantity = signal<SpectrumQuantity>('transmission');
  protected readonly unit = signal<ConductanceUnit>('2e2/h');
  protected readonly showResidual = signal(false);
  protected readonly unitLabels = conductanceUnitLabels;
  protected readonly units = Object.keys(conductanceUnitLabels) as ConductanceUnit[];
  protected readonly showReflection = signal(false);
  protected readonly spectrumView = computed<SpectrumView>(() => ({
    // A microwave run has no conductance: T only.
    quantity: this.permittivity() ? 'transmission' : this.quantity(),
    unit: this.unit(),
    residual: this.showResidual(),
    reflection: this.reflectionCurves(),
    xName: this.permittivity() ? 'f (GHz)' : 'E (meV)',
  }));
  /** R per lead, named by the lead, when asked for and stored; drawn beside T only (R has no conductance unit). */
  private readonly reflectionCurves = computed(() => {
    const stored = this.run()?.spectrum?.reflection;
    if (!this.showReflection() || this.quantity() !== 'transmission' || !stored) return null;
    const names = this.leadNames();
    return stored.map((values, l) => ({ lead: names[l] ?? `lead ${l + 1}`, values }));
  });
  protected readonly spectrumWarnings = computed(() => {
    const r = this.run();
    return r ? spectrumWarnings(r) : [];
  });
  protected readonly boundCount = computed(() => this.poles().filter((p) => p.bound || p.width <= 0).length);
  /** A clock for the progress bar's times, once a second. */
  private readonly now = toSignal(interval(1000), { initialValue: 0 });
  protected readonly times = computed(() => {
    this.now();
    const r = this.run();
    if (!r || r.status !== 'running') return null;
    const t = progressTimes(r.startedAt, Date.now(), r.progress?.fraction ?? 0, r.estimate?.expectedSeconds);
    if (!t) return null;
    return { elapsed: durationText(t.elapsed), remaining: t.remaining === null ? null : durationText(t.remaining) };
  });
  protected readonly duration = computed(() => {
    const r = this.run();
    if (!r?.startedAt || !r.finishedAt) return null;
    return durationText((Date.parse(r.finishedAt) - Date.parse(r.startedAt)) / 1000);
  });
  protected readonly loadError = signal<string | null>(null);
  private live: Subscription | null = null;

  protected readonly active = computed(() => {
    const r = this.run();
    return !!r && !finishedStatuses.has(r.status);
  });
  protected readonly percent = computed(() => Math.round(Math.min(1, Math.max(0, this.run()?.progress?.fraction ?? 0)) * 100));
  protected readonly stage = computed(() => {
    const r = this.run();
    return r ? stageInWords(r.progress?.stage, r.status) : '';
  });
  protected readonly certificate = computed(() => certificateInWords(this.run()?.certificate ?? null));
  protected readonly uncertified = computed(() => this.run()?.certificate?.pieces.filter((p) => !p.certified) ?? []);
  protected readonly poles = computed(() => this.run()?.poles ?? []);
  /** A microwave model's run: poles as frequencies (GHz, MHz, ns, Q) from the rows' `microwave` block. */
  protected readonly microwave = computed(() => !!this.run()?.microwave || this.poles().some((p) => p.physics === 'microwave' && p.microwave));
  /** ε_r of a microwave run's model: the charts, the window and the spectrum then read in GHz. */
  protected readonly permittivity = computed(() => this.run()?.microwave?.permittivity ?? null);
  protected readonly windowLine = computed(() => {
    const r = this.run();
    if (!r) return '';
    const eps = this.permittivity();
    return eps ? frequencyWindowText(r.window, eps) : windowText(r.window);
  });
  /** What the charts draw, in the run's own units: meV, or GHz for a microwave run. */
  protected readonly chart = computed(() => {
    const r = this.run();
    const eps = this.permittivity();
    const poles = this.planePoles();
    const limit = this.validityLimit();
    if (!r || !eps) return { unit: 'meV', poles, window: r?.window ?? null, thresholds: r?.thresholds ?? [], limit, spectrum: r?.spectrum ?? null };
    return {
      unit: 'GHz',
      poles: poles.map((p) => frequencyPole(p, eps)),
      window: frequencyWindow(r.window, eps),
      thresholds: frequencies(r.thresholds, eps),
      limit: limit == null ? null : frequencies([limit], eps)[0]!,
      spectrum: r.spectrum ? frequencySpectrum(r.spectrum, eps) : null,
    };
  });
  protected readonly columns = computed(() =>
    this.microwave()
      ? ['index', 'frequency', 'frequencyWidth', 'lifetimeNs', 'qualityMw', 'petermann', 'validity', 'flags']
      : ['index', 'energy', 'width', 'lifetime', 'quality', 'petermann', 'validity', 'flags'],
  );
  protected readonly validityLine = computed(() => validitySummary(this.poles()));
  /** The poles as the charts draw them, with their validity mark. */
  protected readonly planePoles = computed(() => this.poles().map((p) => ({ ...p, aboveLimit: p.validity?.aboveLimit === true })));
  /** The lattice-validity limit in the poles' own unit (meV, or k² in mm⁻²), drawn on the charts. */
  protected readonly validityLimit = computed(() => this.poles().find((p) => p.validity?.limit != null)?.validity?.limit ?? null);
  /** Lead names in engine order, from the run's model version (the spectrum names its pairs by index). */
  protected readonly leadNames = computed(() => this.run()?.leads?.map((l) => l.name) ?? this.poles()[0]?.partialWidths.map((w) => w.lead) ?? []);
  protected readonly flagCounts = computed(() => {
    const p = this.poles();
    return {
      nearThreshold: p.filter((r) => r.nearThreshold).length,
      overlapping: p.filter((r) => r.overlapping).length,
      bound: p.filter((r) => r.bound).length,
    };
  });
  protected readonly canCancel = computed(() => {
    const r = this.run();
    if (!r || !this.active() || !this.canDesign()) return false;
    return this.group.group()?.role === 'admin' || r.createdBy?.id === this.auth.user()?.id;
  });

  constructor() {
    effect(() => {
      const id = this.runId();
      untracked(() => this.load(id));
    });
    this.destroyRef.onDestroy(() => this.live?.unsubscribe());
  }

  protected download(what: 'poles' | 'spectrum', ext: 'csv' | 'json'): void {
    const r = this.run();
    if (!r) return;
    const text = what === 'poles' ? (ext === 'csv' ? polesCsv(r) : polesJson(r)) : ext === 'csv' ? spectrumCsv(r) : spectrumJson(r);
    saveText(text, exportFileName(r, what, ext), ext === 'csv' ? 'text/csv' : 'application/json');
  }

  protected cancel(): void {
    const groupId = this.group.id();
    const r = this.run();
    if (!groupId || !r) return;
    this.api
      .cancel(groupId, r.id)
      .pipe(takeUntilDestroyed(this.destroyRef))
      .subscribe({ error: (err: unknown) => this.errors.show(err) });
  }

  private load(id: string): void {
    const groupId = this.group.id();
    if (!groupId) return;
    this.api
      .run(groupId, id)
      .pipe(takeUntilDestroyed(this.destroyRef))
      .subscribe({
        next: (r) => {
          this.run.set(r);
          if (!finishedStatuses.has(r.status)) this.follow(groupId, id);
        },
        error: (err: unknown) => this.loadError.set(this.errors.show(err).message),
      });
  }

  /** Live progress; when the run ends, the full result is fetched once. */
  private follow(groupId: string, id: string): void {
    this.live?.unsubscribe();
    this.live = this.api.updates(groupId, id).subscribe({
      next: (u) => this.run.update((r) => (r ? { ...r, status: u.status, progress: u.progress } : r)),
      complete: () => this.load(id),
    });
  }
}
