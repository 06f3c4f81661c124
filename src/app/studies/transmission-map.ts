import { ChangeDetectionStrategy, Component, ElementRef, computed, effect, input, output, viewChild } from '@angular/core';
import { interpolateViridis } from 'd3-scale-chromatic';
import type { Trajectory } from '../../../shared/api/studies';

/** One row of the map: a step, its parameter value and its T per column (null: the step did not complete). */
export interface MapRow {
  step: number;
  value: number;
  values: number[] | null;
}

/** Canvas size in device-independent pixels and the plot's margins. */
const size = { width: 760, height: 380, left: 70, right: 84, top: 12, bottom: 44 };

/** Evenly spaced "nice" ticks (1, 2 or 5 × 10ⁿ apart) covering [lo, hi], about `count` of them. */
export function niceTicks(lo: number, hi: number, count = 6): number[] {
  if (!(hi > lo)) return [lo];
  const raw = (hi - lo) / count;
  const power = 10 ** Math.floor(Math.log10(raw));
  const step = [1, 2, 5, 10].map((m) => m * power).find((s) => s >= raw) ?? 10 * power;
  const out: number[] = [];
  for (let v = Math.ceil(lo / step) * step; v <= hi + step * 1e-9; v += step) out.push(Math.abs(v) < step * 1e-9 ? 0 : Number(v.toPrecision(12)));
  return out;
}

/**
 * The band of parameter values each row covers: from halfway to the previous value to
 * halfway to the next (the ends extend by half their neighbour gap), so rows of an
 * uneven list of values still tile the axis without gaps or overlaps.
 */
export function rowBands(values: readonly number[]): [number, number][] {
  if (values.length === 1) return [[values[0] - 0.5, values[0] + 0.5]];
  return values.map((v, k) => {
    const before = k > 0 ? (values[k - 1] + v) / 2 : v - (values[1] - v) / 2;
    const after = k + 1 < values.length ? (v + values[k + 1]) / 2 : v + (v - values[k - 1]) / 2;
    return [Math.min(before, after), Math.max(before, after)];
  });
}

/**
 * The transmission map T(E, p) of one line of a parameter study as an image: energy
 * across, the parameter up, T in viridis (perceptually uniform, readable in grey) with
 * its colour bar, and each trajectory's Re E over it as a white line with dots at the
 * steps. A click on a row opens that step. Drawn on a canvas (jsdom has no 2D context:
 * specs check the layout functions above and the accessible description).
 */
@Component({
  selector: 'pw-transmission-map',
  changeDetection: ChangeDetectionStrategy.OnPush,
  template: `<canvas #canvas role="img" [attr.aria-label]="description()" (click)="pick($event)" data-test="transmission-map"></canvas>`,
  styles: `
    :host {
      display: block;
    }
    canvas {
      max-width: 100%;
      cursor: pointer;
    }
  `,
})
export class TransmissionMap {
  readonly energies = input.required<number[]>();
  readonly rows = input.required<MapRow[]>();
  readonly trajectories = input<Trajectory[]>([]);
  readonly parameter = input('p');
  /** What T is, for the colour bar and the description (e.g. "T source → drain"). */
  readonly quantity = input('T');
  readonly stepPicked = output<number>();

  private readonly canvas = viewChild.required<ElementRef<HTMLCanvasElement>>('canvas');

  /** Rows sorted by parameter value with their bands. */
  private readonly layout = computed(() => {
    const rows = [...this.rows()].sort((a, b) => a.value - b.value);
    const bands = rowBands(rows.map((r) => r.value));
    const energies = this.energies();
    const step = energies.length > 1 ? energies[1] - energies[0] : 1;
    let peak = 0;
    for (const r of rows) for (const v of r.values ?? []) peak = Math.max(peak, v);
    return {
      rows,
      bands,
      emin: energies[0] - step / 2,
      emax: energies[energies.length - 1] + step / 2,
      step,
      pmin: bands[0]?.[0] ?? 0,
      pmax: bands[bands.length - 1]?.[1] ?? 1,
      peak: peak > 0 ? peak : 1,
    };
  });

  protected readonly description = computed(() => {
    const l = this.layout();
    return `Transmission map: ${this.quantity()} from 0 to ${l.peak.toPrecision(3)} over E from ${this.energies()[0]?.toPrecision(5)} to ${this.energies().at(-1)?.toPrecision(5)} meV (across) and ${this.parameter()} (up), ${l.rows.length} steps, with ${this.trajectories().length} trajectories' Re E drawn over it.`;
  });

  constructor() {
    effect(() => this.draw());
  }

  protected pick(event: MouseEvent): void {
    const canvas = this.canvas().nativeElement;
    const box = canvas.getBoundingClientRect();
    if (box.height === 0) return;
    const y = ((event.clientY - box.top) / box.height) * size.height;
    const l = this.layout();
    const p = l.pmax - ((y - size.top) / (size.height - size.top - size.bottom)) * (l.pmax - l.pmin);
    const k = l.bands.findIndex(([lo, hi]) => p >= lo && p <= hi);
    if (k >= 0) this.stepPicked.emit(l.rows[k].step);
  }

  private draw(): void {
    const l = this.layout();
    const energies = this.energies();
    const trajectories = this.trajectories();
    const canvas = this.canvas().nativeElement;
    const ratio = typeof window !== 'undefined' ? Math.min(2, window.devicePixelRatio || 1) : 1;
    canvas.width = size.width * ratio;
    canvas.height = size.height * ratio;
    canvas.style.width = `${size.width}px`;
    const ctx = canvas.getContext('2d');
    if (!ctx) return; // jsdom has no 2D context
    ctx.setTransform(ratio, 0, 0, ratio, 0, 0);
    const style = getComputedStyle(canvas);
    const ink = style.getPropertyValue('--mat-sys-on-surface').trim() || '#191c1d';
    const plotW = size.width - size.left - size.right;
    const plotH = size.height - size.top - size.bottom;
    const x = (e: number) => size.left + ((e - l.emin) / (l.emax - l.emin)) * plotW;
    const y = (p: number) => size.top + (1 - (p - l.pmin) / (l.pmax - l.pmin)) * plotH;
    ctx.clearRect(0, 0, size.width, size.height);
    // Cells: a missing row (step not completed) is left hatched in grey.
    l.rows.forEach((r, k) => {
      const [lo, hi] = l.bands[k];
      const top = y(hi);
      const height = y(lo) - top;
      if (!r.values) {
        ctx.fillStyle = '#9e9e9e';
        ctx.fillRect(size.left, top, plotW, height);
        return;
      }
      r.values.forEach((v, c) => {
        ctx.fillStyle = interpolateViridis(Math.min(1, v / l.peak));
        const left = x(energies[c] - l.step / 2);
        ctx.fillRect(left, top, x(energies[c] + l.step / 2) - left + 0.5, height + 0.5);
      });
    });
    // Trajectories' Re E over the map.
    const valueOf = new Map(l.rows.map((r) => [r.step, r.value]));
    ctx.save();
    ctx.beginPath();
    ctx.rect(size.left, size.top, plotW, plotH);
    ctx.clip();
    for (const t of trajectories) {
      const pts = t.points.filter((p) => valueOf.has(p.step)).map((p) => [x(p.energy), y(p.value)] as const);
      ctx.lineWidth = 3;
      ctx.strokeStyle = 'rgba(0, 0, 0, 0.55)';
      ctx.beginPath();
      pts.forEach(([px, py], k) => (k ? ctx.lineTo(px, py) : ctx.moveTo(px, py)));
      ctx.stroke();
      ctx.lineWidth = 1.5;
      ctx.strokeStyle = '#ffffff';
      ctx.stroke();
      ctx.fillStyle = '#ffffff';
      for (const [px, py] of pts) {
        ctx.beginPath();
        ctx.arc(px, py, 2.5, 0, 2 * Math.PI);
        ctx.fill();
      }
    }
    ctx.restore();
    // Axes.
    ctx.strokeStyle = ink;
    ctx.fillStyle = ink;
    ctx.lineWidth = 1;
    ctx.strokeRect(size.left, size.top, plotW, plotH);
    ctx.font = '12px Roboto, sans-serif';
    ctx.textAlign = 'center';
    ctx.textBaseline = 'top';
    for (const e of niceTicks(energies[0], energies[energies.length - 1])) {
      ctx.beginPath();
      ctx.moveTo(x(e), size.top + plotH);
      ctx.lineTo(x(e), size.top + plotH + 4);
      ctx.stroke();
      ctx.fillText(String(e), x(e), size.top + plotH + 6);
    }
    ctx.fillText('E (meV)', size.left + plotW / 2, size.height - 16);
    ctx.textAlign = 'right';
    ctx.textBaseline = 'middle';
    const values = l.rows.map((r) => r.value);
    for (const p of niceTicks(Math.min(...values), Math.max(...values), 5)) {
      ctx.beginPath();
      ctx.moveTo(size.left - 4, y(p));
      ctx.lineTo(size.left, y(p));
      ctx.stroke();
      ctx.fillText(String(p), size.left - 6, y(p));
    }
    ctx.save();
    ctx.translate(14, size.top + plotH / 2);
    ctx.rotate(-Math.PI / 2);
    ctx.textAlign = 'center';
    ctx.fillText(this.parameter(), 0, 0);
    ctx.restore();
    // Colour bar.
    const barX = size.left + plotW + 16;
    for (let k = 0; k < plotH; k++) {
      ctx.fillStyle = interpolateViridis(1 - k / plotH);
      ctx.fillRect(barX, size.top + k, 14, 1.5);
    }
    ctx.fillStyle = ink;
    ctx.textAlign = 'left';
    for (const v of niceTicks(0, l.peak, 5)) ctx.fillText(String(v), barX + 18, size.top + (1 - v / l.peak) * plotH);
    // The full quantity (leads) is in the caption above the map and the accessible description.
    ctx.textBaseline = 'top';
    ctx.fillText('T', barX + 3, size.top + plotH + 6);
  }
}
