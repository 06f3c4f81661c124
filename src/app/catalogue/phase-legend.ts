import { ChangeDetectionStrategy, Component } from '@angular/core';

/**
 * Legend of the mode images: hue is the phase arg ψ from −π to π (hue 0°, red, at
 * phase 0, as server/catalogue/mode-image.ts draws it), brightness is
 * √(|ψ|²/max |ψ|²), black where the density vanishes; grey is outside the cavity.
 */
@Component({
  selector: 'pw-phase-legend',
  changeDetection: ChangeDetectionStrategy.OnPush,
  template: `
    <svg viewBox="0 0 260 84" role="img" aria-label="Colour legend: hue is the phase from minus pi to pi, brightness is the density">
      <defs>
        <linearGradient id="pw-phase" x1="0" x2="1" y1="0" y2="0">
          @for (s of stops; track s.offset) {
            <stop [attr.offset]="s.offset" [attr.stop-color]="s.colour" />
          }
        </linearGradient>
        <linearGradient id="pw-density" x1="0" x2="1" y1="0" y2="0">
          <stop offset="0" stop-color="#000" />
          <stop offset="1" stop-color="#fff" />
        </linearGradient>
      </defs>
      <text x="0" y="10" class="title">phase arg ψ</text>
      <rect x="0" y="14" width="240" height="14" fill="url(#pw-phase)" />
      <text x="0" y="40">−π</text>
      <text x="120" y="40" text-anchor="middle">0</text>
      <text x="240" y="40" text-anchor="end">π</text>
      <text x="0" y="56" class="title">brightness √(|ψ|² / max |ψ|²)</text>
      <rect x="0" y="60" width="240" height="10" fill="url(#pw-density)" stroke="currentColor" stroke-width="0.5" />
      <text x="0" y="82">0</text>
      <text x="240" y="82" text-anchor="end">1</text>
    </svg>
  `,
  styles: `
    :host { display: block; max-width: 280px; color: var(--mat-sys-on-surface-variant); }
    svg { width: 100%; height: auto; }
    text { font-size: 10px; fill: currentColor; }
  `,
})
export class PhaseLegend {
  /** Hue (phase in degrees, mod 360) every π/6 from −π to π. */
  protected readonly stops = Array.from({ length: 13 }, (_, k) => {
    const phaseDeg = -180 + 30 * k;
    return { offset: k / 12, colour: `hsl(${(phaseDeg + 360) % 360}, 100%, 50%)` };
  });
}
