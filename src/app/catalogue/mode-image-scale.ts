import { ChangeDetectionStrategy, Component, computed, inject, input } from '@angular/core';
import { toObservable, toSignal } from '@angular/core/rxjs-interop';
import { catchError, of, switchMap } from 'rxjs';
import { ModelsApi } from '../core/api/models-api';
import { scaleBarLength } from './mode-map-data';

/**
 * A length scale under a mode image: the image spans the model's whole grid, nx·a
 * nm wide (server/catalogue/mode-image.ts), so a bar of L nm is L/(nx·a) of its width.
 * The grid and spacing come from the model version the resonance was computed on.
 */
@Component({
  selector: 'pw-mode-image-scale',
  changeDetection: ChangeDetectionStrategy.OnPush,
  template: `
    @if (bar(); as b) {
      <div class="scale" data-test="image-scale" [attr.aria-label]="'Scale bar: ' + b.label">
        <span class="bar" [style.width.%]="b.percent"></span>
        <span class="label">{{ b.label }} · image {{ b.widthNm }} nm wide</span>
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
    const widthNm = nx * a;
    const nm = scaleBarLength(widthNm);
    return { percent: (100 * nm) / widthNm, label: nm >= 1000 ? `${nm / 1000} µm` : `${nm} nm`, widthNm: Number(widthNm.toPrecision(4)) };
  });
}
