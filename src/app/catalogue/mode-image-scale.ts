import { ChangeDetectionStrategy, Component, computed, inject, input } from '@angular/core';
import { toObservable, toSignal } from '@angular/core/rxjs-interop';
import { catchError, of, switchMap } from 'rxjs';
import { ModelsApi } from '../core/api/models-api';
import { scaleBarLength } from './mode-map-data';
import { physicsUnits } from '../../../shared/model/physics-mode';

/**
 * A length scale under a mode image: the image spans the model's whole grid, nx·a
 * wide (nm, or mm for a microwave model) (server/catalogue/mode-image.ts), so a bar of L nm is L/(nx·a) of its width.
 * The grid and spacing come from the model version the resonance was computed on.
 */
@Component({
  selector: 'pw-mode-image-scale',
  changeDetection: ChangeDetectionStrategy.OnPush,
  template: `
    @if (bar(); as b) {
      <div class="scale" data-test="image-scale" [attr.aria-label]="'Scale bar: ' + b.label">
        <span class="bar" [style.width.%]="b.percent"></span>
        <span class="label">{{ b.label }} · image {{ b.width }} {{ b.unit }} wide</span>
      </div>
    }
  `,
  styles: `
    .scale { width: 100%; max-width: 520px; display: flex; align-items: center; gap: 8px; margin: 4px 0; font: var(--mat-sys-body-small); color: var(--mat-sys-on-surface); }
    .bar { flex: none; display: inline-block; border-top: 3px solid var(--mat-sys-on-surface); border-left: 2px solid var(--mat-sys-on-surface); border-right: 2px solid var(--mat-sys-on-surface); min-width: 8px; box-sizing: border-box; height: 8px; border-bottom: 0; }
  `,
})
export class ModeImageScale {
  readonly groupId = input.required<string>();
  readonly modelId = input.required<string>();
  readonly version = input.required<number>();

  private readonly models = inject(ModelsApi);
  private readonly key = computed(() => ({ g: this.groupId(), m: this.modelId(), v: this.version() }));
  private readonly model = toSignal(
    toObservable(this.key).pipe(switchMap(({ g, m, v }) => this.models.version(g, m, v).pipe(catchError(() => of(null))))),
    { initialValue: null },
  );

  protected readonly bar = computed(() => {
    const doc = this.model()?.document;
    const nx = Number(doc?.grid?.nx);
    const a = Number(doc?.spacing);
    if (!(nx > 0 && a > 0)) return null;
    // The document's lengths are in its physics mode's unit: nm for a 2DEG, mm for a microwave resonator.
    const unit = physicsUnits(doc?.physics?.kind === 'microwave' ? 'microwave' : 'electrons').length;
    const width = nx * a;
    const bar = scaleBarLength(width);
    const label = unit === 'nm' && bar >= 1000 ? `${bar / 1000} µm` : `${bar} ${unit}`;
    return { percent: (100 * bar) / width, label, width: Number(width.toPrecision(4)), unit };
  });
}
