import { ChangeDetectionStrategy, Component, DestroyRef, computed, effect, inject, input, signal, untracked } from '@angular/core';
import { takeUntilDestroyed } from '@angular/core/rxjs-interop';
import { FormControl, ReactiveFormsModule } from '@angular/forms';
import { MatButtonModule } from '@angular/material/button';
import { MatCardModule } from '@angular/material/card';
import { MatFormFieldModule } from '@angular/material/form-field';
import { MatIconModule } from '@angular/material/icon';
import { MatInputModule } from '@angular/material/input';
import { MatProgressBarModule } from '@angular/material/progress-bar';
import { MatSnackBar } from '@angular/material/snack-bar';
import { RouterLink } from '@angular/router';
import { ErrorReport } from '../core/errors/error-report';
import { CurrentGroup } from '../core/group/current-group';
import { ModeImageScale } from './mode-image-scale';
import { injectCanDesign } from '../core/group/design-permission';
import { certificateInWords } from '../core/format/certificate-words';
import { PolePlaneChart } from '../core/charts/pole-plane-chart';
import type { PlanePole } from '../core/charts/pole-plane-options';
import { frequencyWindowText, windowText } from '../core/format/window-text';
import { CatalogueApi } from './catalogue-api';
import { formatEnergy, formatLifetime, formatQuality, formatWidth, significant } from '../core/format/energy-format';
import { materialLabel } from '../core/format/material-label';
import { PartialWidths } from './partial-widths';
import { PhaseLegend } from './phase-legend';
import { ModeMapPanel } from './mode-map-panel';
import { FabricationPanel } from '../core/fabrication/fabrication-panel';
import type { ResonanceDetail as ResonanceData } from '../../../shared/api/catalogue';

/**
 * One catalogued resonance: its figures in units that fit, the partial widths per
 * lead, the full mode image with its colour legend, the pole on its run's complex
 * plane, links to the model and run, and tag editing for designers.
 */
@Component({
  selector: 'pw-resonance-detail',
  changeDetection: ChangeDetectionStrategy.OnPush,
  imports: [
    ReactiveFormsModule,
    ModeImageScale,
    RouterLink,
    MatButtonModule,
    MatCardModule,
    MatFormFieldModule,
    MatIconModule,
    MatInputModule,
    MatProgressBarModule,
    PartialWidths,
    PhaseLegend,
    PolePlaneChart,
    ModeMapPanel,
    FabricationPanel,
  ],
  templateUrl: './resonance-detail.html',
  styleUrl: './resonance-detail.scss',
})
export class ResonanceDetail {
  readonly resonanceId = input.required<string>();

  private readonly api = inject(CatalogueApi);
  private readonly errors = inject(ErrorReport);
  private readonly snackBar = inject(MatSnackBar);
  private readonly destroyRef = inject(DestroyRef);
  protected readonly group = inject(CurrentGroup);
  protected readonly canDesign = injectCanDesign();
  /** The peak-fit link: the run's spectrum around E ± 6Γ, with the model (and ε_r of a resonator) for computing a finer sweep. */
  protected fitLink(r: ResonanceData): Record<string, string | number> {
    const permittivity = r.microwave ? Number(r.material.replace('eps_r=', '')) : NaN;
    return {
      runId: r.run!.id,
      energy: r.energy,
      width: r.width,
      from: r.energy - 6 * r.width,
      to: r.energy + 6 * r.width,
      modelId: r.model.id,
      version: r.model.version,
      ...(permittivity > 0 ? { permittivity } : {}),
    };
  }

  /** The run's window in the resonance's own units: GHz for a microwave resonator (the run stores k² in mm⁻²). */
  protected runWindowText(r: ResonanceData): string {
    if (!r.run) return '';
    const permittivity = r.microwave ? Number(r.material.replace('eps_r=', '')) : NaN;
    return permittivity > 0 ? frequencyWindowText(r.run.window, permittivity) : windowText(r.run.window);
  }
  protected readonly materialLabel = materialLabel;

  protected readonly resonance = signal<ResonanceData | null>(null);
  protected readonly loadError = signal<string | null>(null);
  protected readonly saving = signal(false);
  protected readonly tags = new FormControl('', { nonNullable: true });
  protected readonly notes = new FormControl('', { nonNullable: true });

  protected readonly figures = computed(() => {
    const r = this.resonance();
    if (!r) return [];
    const mw = r.microwave;
    if (mw) {
      // A resonator reads in frequencies; the engine's raw eigenvalue k² (mm⁻²) stays beside them.
      return [
        { label: 'Frequency f', value: `${mw.frequencyGhz.toFixed(6)} GHz` },
        { label: 'Width Γ_f = 2|Im f|', value: `${significant(mw.widthMhz, 4)} MHz` },
        { label: 'Pole f − iΓ_f/2', value: `${mw.frequencyGhz.toFixed(6)} − i·${significant(mw.widthMhz / 2e3, 4)} GHz` },
        { label: 'Lifetime τ = 1/(2π Γ_f)', value: mw.lifetimeNs == null ? '∞' : `${significant(mw.lifetimeNs, 4)} ns` },
        { label: 'Quality Q = f/Γ_f', value: mw.quality == null ? '∞' : significant(mw.quality, 4) },
        { label: 'Raw eigenvalue k² (Re, −2 Im)', value: `${significant(r.energy, 8)} mm⁻², ${significant(r.width, 4)} mm⁻²` },
        { label: 'Petermann K', value: significant(r.petermann ?? NaN, 4) },
        { label: 'Relative residual ‖(k² − H − Σ)ψ‖', value: significant(r.residual ?? NaN, 2) },
      ];
    }
    return [
      { label: 'Energy E', value: formatEnergy(r.energy, 6) },
      { label: 'Width Γ', value: formatWidth(r.width) },
      { label: 'Pole z = E − iΓ/2', value: `${formatEnergy(r.energy, 6)} − i·${formatWidth(r.width / 2)}` },
      { label: 'Lifetime τ = ħ/Γ', value: formatLifetime(r.lifetimePs) },
      { label: 'Quality Q', value: formatQuality(r.quality) },
      ...(r.source === 'fitted'
        ? []
        : [
            { label: 'Petermann K', value: significant(r.petermann ?? NaN, 4) },
            // The engine's Newton residual ‖T(z)ψ‖/‖T(z)‖ with T(z) = z − H − Σ(z) (shared/engine/pole-refine.ts); "Residual" alone read like a fit.
            { label: 'Relative residual ‖(z − H − Σ)ψ‖', value: significant(r.residual ?? NaN, 2) },
          ]),
    ];
  });
  /** The picture URL that answered an error (none is stored for that resonance). */
  protected readonly missingPicture = signal<string | null>(null);
  protected readonly imageUrl = computed(() => {
    const r = this.resonance();
    const groupId = this.group.id();
    return r && groupId ? this.api.modeImageUrl(groupId, r.id, 'full') : null;
  });
  protected readonly planePoles = computed<PlanePole[]>(() => {
    const r = this.resonance();
    if (!r) return [];
    const others = r.otherPoles.filter((p) => !(Math.abs(p.energy - r.energy) <= 1e-12 * Math.max(1, Math.abs(r.energy)) && p.width === r.width));
    return [...others.map((p) => ({ energy: p.energy, width: p.width, bound: p.width === 0 })), { ...r, id: r.id }];
  });
  protected readonly certificate = computed(() => certificateInWords(this.resonance()?.run?.certificate ?? null));
  protected readonly uncertified = computed(() => {
    const r = this.resonance();
    const piece = r?.run?.certificate?.pieces.find((p) => r.energy >= p.emin && r.energy <= p.emax);
    return !!piece && !piece.certified;
  });

  constructor() {
    effect(() => {
      const id = this.resonanceId();
      untracked(() => this.load(id));
    });
  }

  protected saveTags(): void {
    const groupId = this.group.id();
    const r = this.resonance();
    if (!groupId || !r || this.saving()) return;
    const tags = [...new Set(this.tags.value.split(',').map((t) => t.trim()).filter(Boolean))];
    this.saving.set(true);
    this.api
      .update(groupId, r.id, { tags, notes: this.notes.value })
      .pipe(takeUntilDestroyed(this.destroyRef))
      .subscribe({
        next: (row) => {
          this.saving.set(false);
          this.resonance.update((old) => (old ? { ...old, tags: row.tags ?? tags, notes: row.notes ?? this.notes.value } : old));
          this.snackBar.open('Tags and notes saved.', 'OK', { duration: 3000 });
        },
        error: (err: unknown) => {
          this.saving.set(false);
          this.errors.show(err);
        },
      });
  }

  private load(id: string): void {
    const groupId = this.group.id();
    if (!groupId) return;
    this.api
      .resonance(groupId, id)
      .pipe(takeUntilDestroyed(this.destroyRef))
      .subscribe({
        next: (r) => {
          this.resonance.set(r);
          this.tags.setValue(r.tags.join(', '));
          this.notes.setValue(r.notes ?? '');
        },
        error: (err: unknown) => this.loadError.set(this.errors.show(err).message),
      });
  }
}
