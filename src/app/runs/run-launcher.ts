import { ChangeDetectionStrategy, Component, DestroyRef, computed, effect, inject, input, signal, untracked } from '@angular/core';
import { takeUntilDestroyed } from '@angular/core/rxjs-interop';
import { FormControl, FormGroup, ReactiveFormsModule, Validators } from '@angular/forms';
import { MatButtonModule } from '@angular/material/button';
import { MatButtonToggleModule } from '@angular/material/button-toggle';
import { MatCardModule } from '@angular/material/card';
import { MatFormFieldModule } from '@angular/material/form-field';
import { MatIconModule } from '@angular/material/icon';
import { MatInputModule } from '@angular/material/input';
import { MatProgressBarModule } from '@angular/material/progress-bar';
import { MatSelectModule } from '@angular/material/select';
import { Router, RouterLink } from '@angular/router';
import { Subject, catchError, debounceTime, map, of, switchMap } from 'rxjs';
import { formatDuration, formatEnergy } from '../core/format/energy-format';
import { ErrorReport } from '../core/errors/error-report';
import { fieldError } from '../core/errors/field-error';
import { toProblem } from '../core/errors/problem';
import { CurrentGroup } from '../core/group/current-group';
import type { DerivedFiguresAnswer as DerivedFigures } from '../../../shared/api/models';
import { deriveFigures, energyValidity } from '../../../shared/model/derived-figures';
import { frequencyOfWavenumberSquared, microwaveWindow, wavenumberSquared } from '../../../shared/units/microwave';
import { launcherWarnings } from './launcher-warnings';
import { injectCanDesign } from '../core/group/design-permission';
import { ModelsApi } from '../core/api/models-api';
import { placeIssues } from '../core/errors/model-issues';
import { type AxisThreshold, EnergyAxis } from './energy-axis';
import { type RunRequest, RunsApi } from './runs-api';
import type { ModelDetail, ModelSummary, ModelVersion } from '../../../shared/api/models';
import type { RunEstimate } from '../../../shared/api/runs';
import type { RunKind } from '../../../shared/api/enums';

/**
 * Launches a pole search or a transmission sweep on one model version. The window
 * is drawn on an energy axis with that version's channel thresholds, and the
 * server's estimate (sites, window pieces, expected time, warnings) is shown
 * before anything is queued.
 */
@Component({
  selector: 'pw-run-launcher',
  changeDetection: ChangeDetectionStrategy.OnPush,
  imports: [
    ReactiveFormsModule,
    RouterLink,
    MatButtonModule,
    MatButtonToggleModule,
    MatCardModule,
    MatFormFieldModule,
    MatIconModule,
    MatInputModule,
    MatProgressBarModule,
    MatSelectModule,
    EnergyAxis,
  ],
  templateUrl: './run-launcher.html',
  styleUrl: './run-launcher.scss',
})
export class RunLauncher {
  /** ?modelId= and ?version= preselect a model version (from the model page). */
  readonly modelId = input<string | undefined>(undefined);
  readonly version = input<string | undefined>(undefined);
  /** Prefill from a link (e.g. "compute the peak's spectrum" on a fit): kind and window in the model's own units. */
  readonly runKind = input<string | undefined>(undefined);
  readonly windowMin = input<string | undefined>(undefined);
  readonly windowMax = input<string | undefined>(undefined);
  readonly windowPoints = input<string | undefined>(undefined);

  private readonly runs = inject(RunsApi);
  private readonly models = inject(ModelsApi);
  private readonly errors = inject(ErrorReport);
  private readonly router = inject(Router);
  private readonly destroyRef = inject(DestroyRef);
  protected readonly group = inject(CurrentGroup);
  protected readonly canDesign = injectCanDesign();
  protected readonly fieldError = fieldError;
  protected readonly formatEnergy = formatEnergy;
  protected readonly formatDuration = formatDuration;
  protected readonly Math = Math;

  protected readonly form = new FormGroup({
    modelId: new FormControl('', { nonNullable: true, validators: [Validators.required] }),
    version: new FormControl<number | null>(null),
    kind: new FormControl<RunKind>('pole-search', { nonNullable: true }),
    window: new FormGroup({
      emin: new FormControl<number | null>(1, [Validators.required]),
      emax: new FormControl<number | null>(10, [Validators.required]),
      gammaMax: new FormControl<number | null>(1),
      points: new FormControl<number | null>(400),
    }),
    note: new FormControl('', { nonNullable: true }),
  });

  protected readonly modelChoices = signal<ModelSummary[]>([]);
  protected readonly model = signal<ModelDetail | null>(null);
  protected readonly derived = signal<DerivedFigures | null>(null);
  /** The chosen version's document (the honeycomb's validity needs its lattice block). */
  private readonly versionDocument = signal<ModelVersion['document'] | null>(null);
  /** Graphene: energies stay in meV (the engine's unit), measured from the band centre; the hopping reads in eV. */
  protected readonly honeycomb = computed(() => this.derived()?.lattice === 'honeycomb');
  /**
   * A microwave resonator: the window is typed as frequencies (GHz) and the largest width as
   * Γ_f (MHz), and sent as k² (mm⁻²), the engine's eigenvalue (shared/units/microwave.ts).
   */
  protected readonly microwave = computed(() => this.derived()?.physics === 'microwave');
  private readonly permittivity = computed(() => this.derived()?.permittivity ?? 1);
  protected readonly estimate = signal<RunEstimate | null>(null);
  protected readonly estimateError = signal<string | null>(null);
  protected readonly estimating = signal(false);
  protected readonly launching = signal(false);
  protected readonly value = signal(this.form.getRawValue());
  protected readonly kind = computed(() => this.value().kind);

  /** Every channel opening ε_m − 2t and closing ε_m + 2t of every lead: a window piece never straddles one. */
  protected readonly thresholds = computed<AxisThreshold[]>(() => {
    // A microwave guide's modes open at k² = ε_m − 2t … drawn at their frequencies; they never close below the band top.
    const own = (e: number) => (this.microwave() ? frequencyOfWavenumberSquared(e, this.permittivity()) : e);
    return (this.derived()?.leads ?? [])
      .flatMap((lead) =>
        lead.thresholds.flatMap((th) => [
          { energy: own(th.opens), lead: `${lead.name}, ${this.microwave() ? 'mode' : 'channel'} ${th.channel} opens` },
          ...(this.microwave() ? [] : [{ energy: th.closes, lead: `${lead.name}, channel ${th.channel} closes` }]),
        ]),
      )
      .sort((a, b) => a.energy - b.energy);
  });
  /** t on the axis (meV); none for a microwave model, whose axis is in GHz. */
  protected readonly hopping = computed(() => (this.microwave() ? null : (this.derived()?.hopping ?? null)));
  /**
   * The model-validity check at the top of the window, by the same shared function the
   * API uses (docs/physics-model.md, "Validity figures"): dispersion error and λ/a.
   */
  protected readonly validity = computed(() => {
    if (this.honeycomb()) return this.diracValidity();
    const spacing = this.model()?.spacingNm;
    const emax = this.value().window.emax;
    if (this.microwave()) {
      const t = this.derived()?.hopping;
      // The same rule in k² (mm⁻²) and mm: at least 10 lattice spacings per wavelength.
      return t && spacing && emax != null && emax > 0 ? energyValidity(wavenumberSquared(emax, this.permittivity()), t, spacing, 'microwave') : null;
    }
    const t = this.hopping();
    const lowestOffset = Math.min(0, ...(this.derived()?.leads ?? []).map((l) => l.offset));
    return t && spacing && emax != null && emax > 0 ? energyValidity(emax - lowestOffset, t, spacing) : null;
  });

  /**
   * On the honeycomb, the Dirac picture's validity (shared deriveFigures) at the end of the window
   * farthest from the Dirac point E_D, where the cone is most warped; null while the window is incomplete.
   */
  private readonly diracValidity = computed(() => {
    const doc = this.versionDocument();
    const { emin, emax } = this.value().window;
    if (!doc || emin == null || emax == null) return null;
    const ed = this.derived()?.dirac?.energy ?? 0;
    const far = Math.abs(emin - ed) > Math.abs(emax - ed) ? emin : emax;
    return deriveFigures(doc, 0, far).validity ?? null;
  });
  /** Where the validity is checked, in the words of the warnings. */
  protected readonly validityWhere = computed(() => (this.honeycomb() ? `E = ${this.validity()?.energy ?? '—'} meV` : 'E max'));

  /** Every warning once: the launcher's validity check and the estimate's other warnings. */
  protected readonly warnings = computed(() => launcherWarnings(this.estimate()?.warnings ?? [], this.validity()?.warnings ?? [], this.validityWhere()));

  /** A wavelength in lattice lengths, ∞ at the Dirac point. */
  protected spacingsText(x: number): string {
    return Number.isFinite(x) ? x.toFixed(1) : '∞';
  }

  /** t in eV with meV beside it (graphene's t is about 2.7 eV). */
  protected hoppingEv(meV: number | null): string {
    return meV == null ? '—' : `${(meV / 1000).toPrecision(4)} eV (${formatEnergy(meV)})`;
  }

  private readonly estimates = new Subject<RunRequest | null>();
  /** True when the window came with the link: a model's default window does not replace it. */
  private prefilled = false;

  constructor() {
    this.form.valueChanges.pipe(takeUntilDestroyed()).subscribe(() => {
      this.value.set(this.form.getRawValue());
      this.estimates.next(this.request());
    });
    this.form.controls.modelId.valueChanges.pipe(takeUntilDestroyed()).subscribe((id) => this.loadModel(id, null));
    this.form.controls.version.valueChanges.pipe(takeUntilDestroyed()).subscribe((v) => this.loadDerived(v));

    this.estimates
      .pipe(
        debounceTime(400),
        switchMap((request) => {
          const groupId = this.group.id();
          if (!request || !groupId) return of(null);
          this.estimating.set(true);
          return this.runs.estimate(groupId, request).pipe(
            map((e) => ({ ok: true as const, e })),
            catchError((err: unknown) => of({ ok: false as const, err })),
          );
        }),
        takeUntilDestroyed(),
      )
      .subscribe((answer) => {
        this.estimating.set(false);
        if (!answer) {
          this.estimate.set(null);
          return;
        }
        if (answer.ok) {
          this.estimate.set(answer.e);
          this.estimateError.set(null);
        } else {
          this.estimate.set(null);
          const problem = toProblem(answer.err);
          this.estimateError.set(problem.message);
          if (problem.issues?.length) placeIssues(this.form, problem.issues, []);
        }
      });

    effect(() => {
      const groupId = this.group.id();
      if (!groupId) return;
      untracked(() =>
        this.models
          .list(groupId, { pageSize: 100 })
          .pipe(takeUntilDestroyed(this.destroyRef))
          .subscribe({ next: (r) => this.modelChoices.set(r.items), error: (err: unknown) => this.errors.show(err) }),
      );
    });
    effect(() => {
      const kind = this.runKind();
      const [emin, emax, points] = [this.windowMin(), this.windowMax(), this.windowPoints()].map((x) => (x == null || x === '' ? NaN : Number(x)));
      untracked(() => {
        if (kind === 'transmission' || kind === 'pole-search') this.form.controls.kind.setValue(kind, { emitEvent: false });
        if (Number.isFinite(emin) && Number.isFinite(emax)) {
          this.prefilled = true;
          this.form.controls.window.patchValue({ emin, emax, ...(Number.isInteger(points) && points >= 2 ? { points } : {}) }, { emitEvent: false });
        }
        this.value.set(this.form.getRawValue());
      });
    });
    effect(() => {
      const id = this.modelId();
      const version = this.version();
      untracked(() => {
        if (!id) return;
        this.form.controls.modelId.setValue(id, { emitEvent: false });
        this.loadModel(id, version ? Number(version) : null);
      });
    });
  }

  protected launch(): void {
    const groupId = this.group.id();
    const request = this.request();
    if (!groupId || !request || this.launching()) return;
    const note = this.form.controls.note.value.trim();
    this.launching.set(true);
    this.runs
      .launch(groupId, { ...request, ...(note ? { note } : {}) })
      .pipe(takeUntilDestroyed(this.destroyRef))
      .subscribe({
        next: (run) => {
          this.launching.set(false);
          void this.router.navigate(['/g', this.group.slug(), 'runs', run.id]);
        },
        error: (err: unknown) => {
          this.launching.set(false);
          this.errors.showOnForm(err, this.form);
        },
      });
  }

  /** The request the form describes, or null while it is incomplete. */
  private request(): RunRequest | null {
    const v = this.form.getRawValue();
    const w = v.window;
    if (!v.modelId || w.emin == null || w.emax == null || !(w.emax > w.emin)) return null;
    const common = { modelId: v.modelId, ...(v.version != null ? { version: v.version } : {}) };
    const eps = this.permittivity();
    if (v.kind === 'transmission') {
      const range = this.microwave() ? { emin: wavenumberSquared(w.emin, eps), emax: wavenumberSquared(w.emax, eps) } : { emin: w.emin, emax: w.emax };
      return { ...common, kind: 'transmission', window: { ...range, points: w.points ?? 400 } };
    }
    // The contract requires the width bound of a pole search (shared/api/runs.ts).
    if (w.gammaMax == null) return null;
    if (this.microwave()) {
      if (!(w.emin >= 0)) return null;
      return { ...common, kind: 'pole-search', window: microwaveWindow(w.emin, w.emax, w.gammaMax, eps) };
    }
    return { ...common, kind: 'pole-search', window: { emin: w.emin, emax: w.emax, gammaMax: w.gammaMax } };
  }

  private loadModel(id: string, version: number | null): void {
    const groupId = this.group.id();
    if (!groupId || !id) return;
    this.models
      .model(groupId, id)
      .pipe(takeUntilDestroyed(this.destroyRef))
      .subscribe({
        next: (detail) => {
          const wasMicrowave = this.microwave();
          this.model.set(detail);
          this.versionDocument.set(detail.document);
          const isMicrowave = detail.derived?.physics === 'microwave';
          if (isMicrowave !== wasMicrowave && !this.prefilled) {
            // A window in the model's own units: GHz and MHz for a resonator, meV for electrons.
            const lim = detail.derived?.twoDimensionalLimitGhz;
            this.form.controls.window.patchValue(
              isMicrowave
                ? { emin: lim ? Number((0.4 * lim).toPrecision(2)) : 5, emax: lim ? Number((0.55 * lim).toPrecision(2)) : 10, gammaMax: 100, points: 400 }
                : { emin: 1, emax: 10, gammaMax: 1, points: 400 },
              { emitEvent: false },
            );
          }
          const chosen = version ?? detail.latestVersion;
          this.form.controls.version.setValue(chosen, { emitEvent: false });
          this.value.set(this.form.getRawValue());
          if (chosen === detail.latestVersion) this.derived.set(detail.derived);
          else this.loadDerived(chosen);
          this.estimates.next(this.request());
        },
        error: (err: unknown) => this.errors.show(err),
      });
  }

  private loadDerived(version: number | null): void {
    const groupId = this.group.id();
    const id = this.form.controls.modelId.value;
    if (!groupId || !id || version == null) return;
    this.models
      .version(groupId, id, version)
      .pipe(takeUntilDestroyed(this.destroyRef))
      .subscribe({
        next: (v) => {
          this.derived.set(v.derived);
          this.versionDocument.set(v.document);
        },
        error: (err: unknown) => this.errors.show(err),
      });
  }
}
