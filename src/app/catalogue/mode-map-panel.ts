import { ChangeDetectionStrategy, Component, DestroyRef, computed, effect, inject, input, signal, untracked } from '@angular/core';
import { takeUntilDestroyed } from '@angular/core/rxjs-interop';
import { FormsModule } from '@angular/forms';
import { MatButtonModule } from '@angular/material/button';
import { MatButtonToggleModule } from '@angular/material/button-toggle';
import { MatCheckboxModule } from '@angular/material/checkbox';
import { MatFormFieldModule } from '@angular/material/form-field';
import { MatInputModule } from '@angular/material/input';
import { MatProgressBarModule } from '@angular/material/progress-bar';
import { MatSelectModule } from '@angular/material/select';
import { HttpErrorResponse } from '@angular/common/http';
import { Subscription, filter, switchMap, take, timer } from 'rxjs';
import { ErrorReport } from '../core/errors/error-report';
import type { ModeMapPayload } from '../../../shared/api/mode-maps';
import { decodeModeMap, type ValleyChoice } from './mode-map-data';
import { ModeMapApi, type HusimiSettings, type ModeMapRequest } from './mode-map-api';
import { ModeMapView, type ModeMapLayers } from './mode-map-view';
import { significant } from '../core/format/energy-format';
import type { ModeMapView as ModeMapJob } from '../../../shared/api/mode-maps';

type Source = 'mode' | 'scattering';

/**
 * Current and Husimi maps of a resonance: the pole's current (stored by its run), a
 * scattering state at a real energy from a chosen lead and channel, and Husimi maps of
 * either, computed on demand by the workers with a progress bar. Layers are toggled
 * here and drawn by ModeMapView.
 */
@Component({
  selector: 'pw-mode-map-panel',
  changeDetection: ChangeDetectionStrategy.OnPush,
  imports: [
    FormsModule,
    MatButtonModule,
    MatButtonToggleModule,
    MatCheckboxModule,
    MatFormFieldModule,
    MatInputModule,
    MatProgressBarModule,
    MatSelectModule,
    ModeMapView,
  ],
  templateUrl: './mode-map-panel.html',
  styleUrl: './mode-map-panel.scss',
})
export class ModeMapPanel {
  readonly groupId = input.required<string>();
  readonly resonanceId = input.required<string>();
  readonly modelId = input.required<string>();
  readonly modelVersion = input.required<number>();
  readonly energy = input.required<number>();
  readonly leads = input.required<{ name: string; side: string; width: number }[]>();

  private readonly api = inject(ModeMapApi);
  private readonly errors = inject(ErrorReport);
  private readonly destroyRef = inject(DestroyRef);

  protected readonly source = signal<Source>('mode');
  protected readonly modeMap = signal<ModeMapPayload | null>(null);
  protected readonly modeHusimi = signal<ModeMapPayload | null>(null);
  protected readonly scattering = signal<ModeMapPayload | null>(null);
  protected readonly noStoredCurrent = signal(false);
  protected readonly job = signal<ModeMapJob | null>(null);
  protected readonly jobError = signal<string | null>(null);

  /** On the honeycomb: which valley's Husimi map is drawn (their sum by default). */
  protected readonly valley = signal<ValleyChoice>('both');
  protected layers = signal<ModeMapLayers>({ background: 'density', current: true, husimi: false, peaks: false });
  protected sigmaNm: number | null = null;
  protected directions = 48;
  protected gridNm: number | null = null;
  protected threshold = 0.3;
  protected scatterEnergy: number | null = null;
  protected scatterLead = 0;
  protected scatterChannel = 1;
  private polling: Subscription | null = null;

  protected readonly payload = computed(() => {
    if (this.source() === 'scattering') return this.scattering();
    return this.modeHusimi() ?? this.modeMap();
  });
  protected readonly field = computed(() => {
    const p = this.payload();
    return p ? decodeModeMap(p, p.husimi, this.valley()) : null;
  });
  protected readonly husimi = computed(() => this.payload()?.husimi ?? null);
  protected readonly honeycomb = computed(() => (this.modeMap() ?? this.scattering())?.lattice === 'honeycomb');
  /**
   * A honeycomb Husimi map's valley figures: valley K's share over the non-empty points (mean, range), the
   * empty points, and whether σ is large against the cavity (long wavelength near the Dirac point).
   */
  protected readonly valleySummary = computed(() => {
    const f = this.field();
    const h = f?.husimi;
    if (!f || !h?.valleyShare) return null;
    let sum = 0,
      count = 0,
      lo = 1,
      hi = 0;
    for (const v of h.valleyShare) {
      if (!Number.isFinite(v)) continue;
      sum += v;
      count++;
      lo = Math.min(lo, v);
      hi = Math.max(hi, v);
    }
    let w = 0,
      ht = 0;
    for (let s = 0; s < f.x.length; s++) {
      w = Math.max(w, f.x[s]);
      ht = Math.max(ht, f.y[s]);
    }
    const sigma = this.husimi()!.sigmaNm;
    return {
      mean: count ? sum / count : NaN,
      lo,
      hi,
      points: h.valleyShare.length,
      empty: h.emptyPoints,
      /** σ above a quarter of the cavity's smaller side: the map averages over much of the cavity. */
      wide: sigma > 0.25 * Math.min(w, ht),
      diracEnergy: this.husimi()!.diracEnergy ?? 0,
    };
  });
  /** A bound state's current is zero: the map's values are rounding, and arrows scaled to their own maximum would mislead. */
  protected readonly bound = computed(() => this.payload()?.state.kind === 'bound');
  protected readonly viewLayers = computed(() => (this.bound() ? { ...this.layers(), current: false } : this.layers()));
  protected readonly caption = computed(() => {
    const p = this.payload();
    if (!p) return [];
    const st = p.state;
    const e = significant(st.energy, 6);
    const lines = [
      st.kind === 'scattering'
        ? `Scattering state at E = ${e} meV from lead ${st.leadName ?? st.lead}, channel ${st.channel} (incoming flux 1)`
        : st.kind === 'bound'
          ? `Bound state at E = ${e} meV (Γ = 0)`
          : `Resonance mode, z = E − iΓ/2 = ${e} − i·${significant(st.width / 2, 4)} meV`,
      st.kind === 'bound'
        ? `${this.backgroundWords()} · no current arrows: a bound state carries no net current`
        : `${this.backgroundWords()} · white arrows: probability current, largest site ${significant(this.largestArrow(), 3)} ${p.unit}`,
    ];
    const h = p.husimi;
    const vs = this.valleySummary();
    if (h && vs) {
      const which = this.valley() === 'both' ? 'both valleys (glyph colour: valley K share, orange K → blue K′)' : `valley ${this.valley()}`;
      lines.push(
        `Husimi, ${which}: angle = ray direction (group velocity) of the valley's cone; σ = ${significant(h.sigmaNm, 3)} nm, ${h.directions.length} directions, grid ${significant(h.gridNm, 3)} nm, angular resolution ≈ ${significant((h.angularResolution * 180) / Math.PI, 2)}°`,
        `Valley K share ${significant(vs.mean * 100, 3)} % (${significant(vs.lo * 100, 2)}–${significant(vs.hi * 100, 2)} %)` +
          (vs.empty ? `; ${vs.empty} of ${vs.points} points near the Dirac energy left empty` : '') +
          (vs.wide ? '; σ is large against the cavity (long wavelength near the Dirac point): the map is blurred in space' : ''),
      );
    } else if (h) {
      lines.push(
        `Husimi: σ = ${significant(h.sigmaNm, 3)} nm, ${h.directions.length} directions, grid ${significant(h.gridNm, 3)} nm, angular resolution ≈ ${significant((h.angularResolution * 180) / Math.PI, 2)}°; amber arrows: peaks above ${significant(h.peakThreshold * 100, 2)} %`,
      );
    }
    if (st.kind === 'pole') lines.push('A resonance decays: its current leaves through the leads, net outflow Γ/ħ.');
    return lines;
  });
  private backgroundWords(): string {
    switch (this.layers().background) {
      case 'phase':
        return 'Brightness √(|ψ|²/max), hue arg ψ';
      case 'ldos':
        return 'Local density of states √(ρ/max), cividis';
      case 'none':
        return 'No background';
      default:
        return 'Density √(|ψ|²/max), cividis (dark blue 0 → yellow max)';
    }
  }
  protected readonly fileName = computed(() => {
    const p = this.payload();
    return p ? `${p.state.kind}-${significant(p.state.energy, 6)}meV${p.husimi ? '-husimi' : ''}` : 'mode-map';
  });
  protected readonly largestArrow = computed(() => {
    const f = this.field();
    if (!f) return 0;
    let m = 0;
    for (let s = 0; s < f.jx.length; s++) m = Math.max(m, Math.hypot(f.jx[s], f.jy[s]));
    return m;
  });

  constructor() {
    effect(() => {
      const group = this.groupId();
      const id = this.resonanceId();
      untracked(() => {
        this.scatterEnergy = this.energy();
        this.load(group, id);
      });
    });
  }

  protected setLayer<K extends keyof ModeMapLayers>(key: K, value: ModeMapLayers[K]): void {
    this.layers.update((l) => ({ ...l, [key]: value }));
  }

  protected husimiSettings(): HusimiSettings {
    return {
      ...(this.sigmaNm ? { sigmaNm: this.sigmaNm } : {}),
      directions: this.directions,
      ...(this.gridNm ? { gridNm: this.gridNm } : {}),
      peakThreshold: this.threshold,
    };
  }

  protected computeModeMap(withHusimi: boolean): void {
    this.submit({ resonanceId: this.resonanceId(), husimi: withHusimi ? this.husimiSettings() : null }, 'mode', withHusimi);
  }

  protected computeScattering(withHusimi: boolean): void {
    if (this.scatterEnergy === null || !Number.isFinite(this.scatterEnergy)) {
      this.jobError.set('Give the energy of the scattering state (meV).');
      return;
    }
    this.submit(
      {
        modelId: this.modelId(),
        version: this.modelVersion(),
        energy: this.scatterEnergy,
        lead: this.scatterLead,
        channel: this.scatterChannel,
        husimi: withHusimi ? this.husimiSettings() : null,
      },
      'scattering',
      withHusimi,
    );
  }

  private load(groupId: string, id: string): void {
    this.api
      .poleCurrent(groupId, id)
      .pipe(takeUntilDestroyed(this.destroyRef))
      .subscribe({
        next: (p) => this.modeMap.set(p),
        error: (err: unknown) => {
          if (err instanceof HttpErrorResponse && err.status === 404 && err.error?.code === 'no_current') this.noStoredCurrent.set(true);
          else this.errors.show(err);
        },
      });
  }

  private submit(body: ModeMapRequest, target: Source, withHusimi: boolean): void {
    this.jobError.set(null);
    this.polling?.unsubscribe();
    this.api
      .request(this.groupId(), body)
      .pipe(takeUntilDestroyed(this.destroyRef))
      .subscribe({
        next: (job) => this.follow(job, target, withHusimi),
        error: (err: unknown) => this.jobError.set(this.errors.show(err).message),
      });
  }

  private follow(first: ModeMapJob, target: Source, withHusimi: boolean): void {
    this.job.set(first);
    const done = (job: ModeMapJob) => {
      this.job.set(null);
      if (job.status === 'failed') {
        this.jobError.set(job.error ?? 'The map could not be computed.');
        return;
      }
      if (!job.result) return;
      if (target === 'mode') {
        if (withHusimi) this.modeHusimi.set(job.result);
        else this.modeMap.set(job.result);
        this.noStoredCurrent.set(false);
      } else this.scattering.set(job.result);
      this.source.set(target);
      if (withHusimi) this.layers.update((l) => ({ ...l, husimi: true, peaks: true }));
    };
    if (first.status === 'completed' || first.status === 'failed') {
      if (first.result || first.status === 'failed') return done(first);
    }
    this.polling = timer(500, 1000)
      .pipe(
        switchMap(() => this.api.job(this.groupId(), first.id)),
        filter((job) => {
          this.job.set(job);
          return job.status === 'completed' || job.status === 'failed';
        }),
        take(1),
        takeUntilDestroyed(this.destroyRef),
      )
      .subscribe({ next: done, error: (err: unknown) => this.jobError.set(this.errors.show(err).message) });
  }

  protected readonly significant = significant;
}
