import type { DeviceLayout } from '../../shared/layout/device-layout.js';
import { escapeHtml } from '../mail/escape-html.js';

const fills: Record<string, string> = { 'cavity-traced': '#4a6fa5', 'cavity-drawn': 'none', leads: '#9a9a9a' };

/**
 * The layout as SVG: user units nm, y up as in the model (a flip on the outer group), one
 * <g> per layer with its layer number and description, each polygon an even-odd <path>.
 */
export function layoutSvg(layout: DeviceLayout, title: string): string {
  const { xmin, ymin, xmax, ymax } = layout.extent;
  const pad = 0.05 * Math.max(xmax - xmin, ymax - ymin);
  const w = xmax - xmin + 2 * pad;
  const h = ymax - ymin + 2 * pad;
  const stroke = (Math.max(w, h) / 400).toPrecision(3);
  const groups = layout.layers.map((l) => {
    const fill = fills[l.name] ?? 'none';
    const colour = l.name.startsWith('gate') ? '#c0392b' : l.name === 'cavity-drawn' ? '#111111' : '#333333';
    const paths = l.polygons.map((ring) => `<path d="M ${ring.map(([x, y]) => `${+x.toFixed(3)} ${+y.toFixed(3)}`).join(' L ')} Z"/>`).join('');
    return (
      `<g id="layer-${l.layer}" data-layer="${l.layer}" data-datatype="${l.datatype}" fill="${fill}" fill-opacity="0.45" fill-rule="evenodd" stroke="${colour}" stroke-width="${stroke}">` +
      `<title>${escapeHtml(`layer ${l.layer}: ${l.description}`)}</title>${paths}</g>`
    );
  });
  return (
    `<?xml version="1.0" encoding="UTF-8"?>\n` +
    `<svg xmlns="http://www.w3.org/2000/svg" width="${+w.toFixed(3)}nm" height="${+h.toFixed(3)}nm" viewBox="${+(xmin - pad).toFixed(3)} ${+(-ymax - pad).toFixed(3)} ${+w.toFixed(3)} ${+h.toFixed(3)}">\n` +
    `<title>${escapeHtml(title)}</title>\n` +
    `<desc>${escapeHtml(`Poleward layout, units nm, y up. Cavity outline: ${layout.outline}. Simulated geometry: check it against the fabrication line's own design rules.`)}</desc>\n` +
    `<g transform="scale(1,-1)">\n${groups.join('\n')}\n</g>\n</svg>\n`
  );
}
