import { ChangeDetectionStrategy, Component, DestroyRef, computed, effect, inject, input, signal, untracked } from '@angular/core';
import { frequencyOfWavenumberSquared } from '../../../shared/units/microwave';
import { takeUntilDestroyed } from '@angular/core/rxjs-interop';
import { FormsModule } from '@angular/forms';
import { MatButtonModule } from '@angular/material/button';
import { MatCardModule } from '@angular/material/card';
import { MatFormFieldModule } from '@angular/material/form-field';
import { MatIconModule } from '@angular/material/icon';
import { MatInputModule } from '@angular/material/input';
import { MatProgressBarModule } from '@angular/material/progress-bar';
import { MatSelectModule } from '@angular/material/select';
import { Router, RouterLink } from '@angular/router';
import { NgxEchartsDirective } from 'ngx-echarts';
import { ErrorReport } from '../core/errors/error-report';
import { CurrentGroup } from '../core/group/current-group';
import { significant } from '../core/format/energy-format';
import { chartColours } from '../core/charts/chart-colours';
import { brushRange } from './brush-range';
import { fitChartOptions } from './fit-chart-options';
import { FitsApi, type FitRequest } from '../core/api/fits-api';
import type { FitDetail, FitRequestBody } from '../../../shared/api/fits';
import type { Lineshape } from '../../../shared/engine/fit-lineshapes';

/** The parts of the echarts instance the workspace calls. */
interface FitChart {
  getOption(): { dataZoom?: { startValue?: number; endValue?: number }[] };
  dispatchAction(action: Record<string, unknown>): void;
}

/** kT per mK in meV (CODATA 2018 k_B = 8.617333262e-5 eV/K). */
const KT_PER_MK = 8.617333262e-5;

/**
 * The fit workspace: the data (a range of a run's spectrum, or a measured trace), a drag
 * across the chart (lineX brush) or the slider under it that chooses the range (the range
 * fields follow), the lineshape, the fitted curve with its
 * components and residuals, the parameters with their uncertainties, and the nearest
 * computed pole with the agreement. Opened empty (/fits/new?runId=… or ?traceId=…) or on a
 * saved fit (/fits/:fitId).
 */
/** Fewest samples of a computed spectrum in the range that resolve a peak's lineshape (common practice, no source). */
const RESOLVED_SAMPLES = 20;

@Component({
  selector: 'pw-fit-workspace',
  changeDetection: ChangeDetectionStrategy.OnPush,
  imports: [
    FormsModule,
    RouterLink,
    MatButtonModule,
    MatCardModule,
    MatFormFieldModule,
    MatIconModule,
    MatInputModule,
    MatProgressBarModule,
    MatSelectModule,
    NgxEchartsDirective,
  ],
  templateUrl: './fit-workspace.html',
  styleUrl: './fit-workspace.scss',
})
export class FitWorkspace {
  readonly fitId = input<string>();
  readonly runId = input<string>();
  readonly traceId = input<string>();
  readonly energy = input<string>();
  readonly width = input<string>();
  readonly from = input<string>();
  readonly to = input<string>();
  /** The run's model and version, when the link knows them: for computing a finer spectrum of the range. */
  readonly modelId = input<string>();
  readonly version = input<string>();
  /** ε_r of a microwave model (the spectrum is in k²; the launcher takes GHz). */
  readonly permittivity = input<string>();

  private readonly api = inject(FitsApi);
  private readonly errors = inject(ErrorReport);
  private readonly router = inject(Router);
  private readonly destroyRef = inject(DestroyRef);
  protected readonly group = inject(CurrentGroup);
  protected readonly significant = significant;

  protected readonly data = signal<{ x: number[]; y: number[] } | null>(null);
  protected readonly sourceText = signal('');
  protected readonly fit = signal<FitDetail | null>(null);
  protected readonly busy = signal(false);
  protected readonly problem = signal<string | null>(null);
  protected readonly rangeFrom = signal<number | null>(null);
  protected readonly rangeTo = signal<number | null>(null);
  protected lineshape: Lineshape = 'bw';
  protected background: 'constant' | 'linear' = 'constant';
  protected peaks = 1;
  protected temperatureMK: number | null = null;
  private source: { kind: 'run'; runId: string } | { kind: 'trace'; traceId: string } | null = null;

  protected readonly lineshapes: { value: Lineshape; label: string }[] = [
    { value: 'bw', label: 'Breit–Wigner' },
    { value: 'fano', label: 'Fano (asymmetry q)' },
    { value: 'thermal', label: 'Breit–Wigner, thermally broadened' },
    { value: 'thermal-fano', label: 'Fano, thermally broadened' },
  ];

  protected readonly result = computed(() => this.fit()?.result ?? null);
  protected readonly chartOptions = computed(() => {
    const d = this.data();
    if (!d) return null;
    const from = this.rangeFrom();
    const to = this.rangeTo();
    return fitChartOptions(d, this.result(), from !== null && to !== null ? { from, to } : null, chartColours());
  });
  /** Samples of the spectrum inside the chosen range. */
  protected readonly samplesInRange = computed(() => {
    const d = this.data();
    const from = this.rangeFrom();
    const to = this.rangeTo();
    if (!d || from === null || to === null) return null;
    return d.x.filter((x) => x >= Math.min(from, to) && x <= Math.max(from, to)).length;
  });
  /**
   * A run's spectrum too coarse to resolve a lineshape in the range (fewer than
   * RESOLVED_SAMPLES points): the launcher link of a transmission sweep over it, or null.
   */
  protected readonly finerSweep = computed(() => {
    const n = this.samplesInRange();
    if (this.source?.kind !== 'run' || n === null || n >= RESOLVED_SAMPLES) return null;
    const from = this.rangeFrom()!;
    const to = this.rangeTo()!;
    const eps = Number(this.permittivity());
    // The launcher takes a microwave window in GHz; the spectrum here is in k².
    const own = (k2: number) => (eps > 0 ? Number(frequencyOfWavenumberSquared(k2, eps).toPrecision(9)) : k2);
    const modelId = this.modelId();
    return {
      samples: n,
      link: modelId
        ? {
            modelId,
            ...(this.version() ? { version: this.version() } : {}),
            runKind: 'transmission',
            windowMin: own(Math.min(from, to)),
            windowMax: own(Math.max(from, to)),
            windowPoints: 200,
          }
        : null,
    };
  });
  protected readonly thermalNote = computed(() => {
    const t = this.fit()?.result?.temperatureMK ?? this.temperatureMK;
    return t
      ? `kT = ${significant(t * KT_PER_MK * 1000, 3)} µeV at ${t} mK; thermal width 3.53·kT = ${significant(3.5255 * t * KT_PER_MK * 1000, 3)} µeV`
      : null;
  });

  constructor() {
    effect(() => {
      if (this.chartOptions()) untracked(() => this.armBrush());
    });
    effect(() => {
      const groupId = this.group.id();
      const fitId = this.fitId();
      const runId = this.runId();
      const traceId = this.traceId();
      if (!groupId) return;
      untracked(() => {
        if (fitId) this.loadFit(groupId, fitId);
        else if (runId) this.loadRun(groupId, runId);
        else if (traceId) this.loadTrace(groupId, traceId);
      });
    });
  }

  private loadRun(groupId: string, runId: string) {
    this.source = { kind: 'run', runId };
    this.api.runSpectrum(groupId, runId).subscribe({
      next: (s) => {
        this.data.set({ x: s.energies, y: s.transmission[0] ?? [] });
        this.sourceText.set(`Computed spectrum of run ${runId.slice(0, 8)} (first lead pair)`);
        const from = Number(this.from());
        const to = Number(this.to());
        if (Number.isFinite(from) && Number.isFinite(to) && this.from() && this.to()) {
          // Nine figures: the link's E ± 6Γ carries all sixteen of a double.
          this.rangeFrom.set(Number(Math.max(from, Math.min(...s.energies)).toPrecision(9)));
          this.rangeTo.set(Number(Math.min(to, Math.max(...s.energies)).toPrecision(9)));
        }
      },
      error: (err) => this.errors.show(err),
    });
  }

  private loadTrace(groupId: string, traceId: string) {
    this.source = { kind: 'trace', traceId };
    this.api.trace(groupId, traceId).subscribe({
      next: (t) => {
        this.data.set({ x: t.energies, y: t.transmission });
        this.temperatureMK = t.temperatureMK;
        this.sourceText.set(`Measured trace "${t.deviceName}" (${t.fileName}, ${t.temperatureMK} mK${t.modelName ? `, model ${t.modelName}` : ''})`);
      },
      error: (err) => this.errors.show(err),
    });
  }

  private loadFit(groupId: string, fitId: string) {
    this.api.fit(groupId, fitId).subscribe({
      next: (f) => {
        this.fit.set(f);
        const req = f.request as unknown as FitRequestBody; // stored as validated, defaults filled in
        this.lineshape = req.lineshape;
        this.background = req.background;
        this.peaks = req.peaks;
        this.temperatureMK = req.temperatureMK ?? null;
        if (f.runId) this.loadRun(groupId, f.runId);
        else if (f.traceId) this.loadTrace(groupId, f.traceId);
        const src = req.source as { from?: number; to?: number };
        if (src.from !== undefined && src.to !== undefined) {
          this.rangeFrom.set(src.from);
          this.rangeTo.set(src.to);
        }
        if (f.status === 'queued' || f.status === 'running') this.follow(groupId, fitId);
      },
      error: (err) => this.errors.show(err),
    });
  }

  /** A queued or running fit: its progress as the server streams it, then the finished fit. */
  private follow(groupId: string, fitId: string) {
    this.api
      .follow(groupId, fitId)
      .pipe(takeUntilDestroyed(this.destroyRef))
      .subscribe({ next: (u) => this.fit.update((f) => (f ? { ...f, ...u } : f)), error: (err) => this.errors.show(err) });
  }

  /** The slider under the chart moved: its values are the range to fit. */
  protected onZoom(event: unknown, chart: FitChart | null) {
    const dz = chart?.getOption().dataZoom?.[0];
    if (dz && typeof dz.startValue === 'number' && typeof dz.endValue === 'number') {
      this.rangeFrom.set(dz.startValue);
      this.rangeTo.set(dz.endValue);
    }
    void event;
  }

  protected chart: FitChart | null = null;
  protected onChartInit(instance: unknown) {
    this.chart = instance as FitChart;
    this.armBrush();
  }

  /**
   * Dragging over the plot draws a lineX brush at once, with no toolbox button to press.
   * The chart directive replaces the whole option (and so the brush's state) on every
   * change and only after chartInit, hence re-armed a turn after each new option.
   */
  private armBrush() {
    setTimeout(() => this.chart?.dispatchAction({ type: 'takeGlobalCursor', key: 'brush', brushOption: { brushType: 'lineX', brushMode: 'single' } }));
  }

  /**
   * A drag across the data ended: its ends are the range to fit. The range fields and the
   * slider follow; the drawn band is cleared because the view then zooms to the range.
   */
  protected onBrush(event: unknown) {
    const range = brushRange(event);
    if (!range) return;
    this.rangeFrom.set(range.from);
    this.rangeTo.set(range.to);
    this.chart?.dispatchAction({ type: 'brush', areas: [] });
  }

  protected setRange(which: 'from' | 'to', value: string) {
    const v = Number(value);
    if (!Number.isFinite(v)) return;
    (which === 'from' ? this.rangeFrom : this.rangeTo).set(v);
  }

  protected runFit() {
    const groupId = this.group.id();
    if (!groupId || !this.source) return;
    const d = this.data();
    const from = this.rangeFrom() ?? (d ? Math.min(...d.x) : 0);
    const to = this.rangeTo() ?? (d ? Math.max(...d.x) : 0);
    const energy = Number(this.energy());
    const width = Number(this.width());
    const request: FitRequest = {
      source:
        this.source.kind === 'run' ? { kind: 'run', runId: this.source.runId, pair: 0, from, to } : { kind: 'trace', traceId: this.source.traceId, from, to },
      lineshape: this.lineshape,
      background: this.background,
      peaks: this.peaks,
      ...(this.temperatureMK ? { temperatureMK: this.temperatureMK } : {}),
      ...(this.peaks === 1 && this.energy() && Number.isFinite(energy) && energy >= from && energy <= to
        ? { hints: [{ energy, ...(width > 0 ? { width } : {}) }] }
        : {}),
    };
    this.busy.set(true);
    this.problem.set(null);
    this.api.create(groupId, request).subscribe({
      next: (f) => {
        this.busy.set(false);
        void this.router.navigate(['/g', this.group.slug(), 'fits', f.id]);
      },
      error: (err) => {
        this.busy.set(false);
        this.problem.set(err?.error?.message ?? 'The fit failed.');
      },
    });
  }

  protected fmt(value: number | null | undefined, digits = 3): string {
    return value === null || value === undefined || !Number.isFinite(value) ? '—' : significant(value, digits);
  }

  protected pm(value: number | null | undefined, error: number | null | undefined, digits = 4): string {
    if (value === null || value === undefined) return '—';
    return error === null || error === undefined
      ? `${significant(value, digits)} (no uncertainty)`
      : `${significant(value, digits)} ± ${significant(error, 2)}`;
  }
}
