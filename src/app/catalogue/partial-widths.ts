import { ChangeDetectionStrategy, Component, computed, input } from '@angular/core';
import { formatWidth, significant } from '../core/format/energy-format';

/** The partial widths Γ_ℓ of one resonance as a small bar list, each bar its share of Γ. */
@Component({
  selector: 'pw-partial-widths',
  changeDetection: ChangeDetectionStrategy.OnPush,
  template: `
    <ul>
      @for (b of bars(); track b.lead) {
        <li>
          <span class="lead">{{ b.lead }}</span>
          <span class="bar" [attr.aria-hidden]="true"><span class="fill" [style.width.%]="b.percent"></span></span>
          <span class="value">{{ b.text }} · {{ b.percent.toFixed(1) }} %</span>
        </li>
      } @empty {
        <li>No leads: no partial widths.</li>
      }
    </ul>
  `,
  styles: `
    ul { list-style: none; margin: 0; padding: 0; }
    li { display: grid; grid-template-columns: 7em 1fr 12em; gap: 8px; align-items: center; padding: 2px 0; }
    .bar { height: 10px; background: var(--mat-sys-surface-container-high); border-radius: 5px; overflow: hidden; }
    .fill { display: block; height: 100%; background: var(--mat-sys-primary); }
    .value { font: var(--mat-sys-body-small); }
  `,
})
export class PartialWidths {
  readonly widths = input.required<readonly { lead: string; width: number }[]>();
  /** Total width Γ (meV): the partial widths sum to it (contract, "Partial widths"). */
  readonly total = input.required<number>();
  /** A microwave resonance's total Γ_f (MHz): each port's share of Γ is then shown as its share of Γ_f. */
  readonly totalMhz = input<number | null>(null);

  protected readonly bars = computed(() => {
    const total = this.total();
    const mhz = this.totalMhz();
    return this.widths().map((w) => ({
      lead: w.lead,
      text: mhz !== null && total > 0 ? `${significant((mhz * w.width) / total, 4)} MHz` : formatWidth(w.width),
      percent: total > 0 ? Math.min(100, Math.max(0, (100 * w.width) / total)) : 0,
    }));
  });
}
