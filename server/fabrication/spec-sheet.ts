/**
 * The spec sheet of an approved resonance (PDF through pdfkit, in the Roboto font the client
 * ships): the model and its version, the material, the target E, Γ, τ and Q with the
 * tolerances, the validity figures, the mode image, the outline with its dimensions, who
 * proposed and approved it, and the standing caution. One or two A4 pages.
 */
import { createRequire } from 'node:module';
import PDFDocument from 'pdfkit';
import type { DeviceLayout } from '../../shared/layout/device-layout.js';
import type { Measurement } from '../../shared/api/fabrication.js';
import type { EnergyValidity } from '../../shared/model/derived-figures.js';

const require = createRequire(import.meta.url);
const font = (name: string) => require.resolve(`@fontsource/roboto/files/${name}.woff`);
const FONTS = {
  regular: font('roboto-latin-400-normal'),
  bold: font('roboto-latin-700-normal'),
  greek: font('roboto-greek-400-normal'),
  greekBold: font('roboto-greek-700-normal'),
  latinExt: font('roboto-latin-ext-400-normal'),
  latinExtBold: font('roboto-latin-ext-700-normal'),
};

/** Which face of the subset fonts holds a character: Greek, Latin Extended (ħ), or Latin. */
function faceOf(ch: string): 'Greek' | 'Ext' | '' {
  const c = ch.codePointAt(0)!;
  if (c >= 0x370 && c <= 0x3ff) return 'Greek';
  if ((c >= 0x100 && c <= 0x24f) || (c >= 0x1e00 && c <= 0x1eff)) return 'Ext';
  return '';
}

export const STANDING_CAUTION =
  'Simulated figures are no substitute for measurement, nor for the fabrication line’s own design rules: the model is a tight-binding ' +
  'lattice of the cavity with ideal leads, and the real device differs from it (disorder, edge depletion, gate lever arms, lithography ' +
  'tolerances). Check every dimension against the process before use.';

export interface SpecSheetInput {
  groupName: string;
  resonanceId: string;
  generatedAt: Date;
  model: {
    name: string;
    version: number;
    material: string;
    massRatio: number;
    spacingNm: number;
    nx: number;
    ny: number;
    siteCount: number;
    fieldT: number;
    leads: string[];
  };
  figures: {
    energy: number;
    width: number;
    lifetimePs: number | null;
    quality: number | null;
    partialWidths: { lead: string; width: number }[];
    petermann: number | null;
    bound: boolean;
    nearThreshold: boolean;
    overlapping: boolean;
  };
  tolerances: { energyMeV: number | null; minQuality: number | null };
  validity: EnergyValidity & { hopping: number; energyCeiling: number };
  proposal: { by: string; at: Date; reason: string };
  review: { by: string; at: Date | null; reason: string | null };
  batch: string | null;
  measurement: Measurement | null;
  layout: DeviceLayout;
  gdsRoundingNm: number;
  /** PNG bytes (a Buffer turns into a Uint8Array on its way to the compute thread). */
  modeImage: Uint8Array | null;
}

const fmt = (v: number | null, digits = 6) => (v === null ? '∞' : Number(v.toPrecision(digits)).toString());

/** Writes text, switching faces for Greek letters and ħ (each subset font lacks the others' letters). */
function say(doc: PDFKit.PDFDocument, text: string, bold = false, options: PDFKit.Mixins.TextOptions = {}): void {
  const runs: { face: string; text: string }[] = [];
  for (const ch of text) {
    const face = faceOf(ch);
    const last = runs[runs.length - 1];
    if (last && last.face === face) last.text += ch;
    else runs.push({ face, text: ch });
  }
  if (runs.length === 0) runs.push({ face: '', text: '' });
  runs.forEach((run, k) => {
    doc.font(run.face === '' ? (bold ? 'Bold' : 'Regular') : `${run.face}${bold ? 'Bold' : ''}`);
    doc.text(run.text, { ...options, continued: k < runs.length - 1 });
  });
}

function heading(doc: PDFKit.PDFDocument, text: string): void {
  doc.moveDown(0.6).fontSize(12);
  say(doc, text, true);
  doc.fontSize(9.5).moveDown(0.2);
}

function row(doc: PDFKit.PDFDocument, label: string, value: string): void {
  const y = doc.y;
  doc.fontSize(9.5);
  say(doc, label, false, { width: 150 });
  const after = doc.y;
  doc.y = y;
  doc.x = doc.page.margins.left + 160;
  say(doc, value, true, { width: doc.page.width - doc.page.margins.right - doc.x });
  doc.x = doc.page.margins.left;
  doc.y = Math.max(after, doc.y);
}

/** The layout drawn to scale in a box, y up, with the cavity's bounding box dimensioned in nm. */
function drawLayout(doc: PDFKit.PDFDocument, layout: DeviceLayout, x0: number, y0: number, w: number, h: number): void {
  const { xmin, ymin, xmax, ymax } = layout.extent;
  const s = Math.min((w - 60) / (xmax - xmin), (h - 40) / (ymax - ymin));
  const ox = x0 + 10;
  const oy = y0 + 10;
  const X = (x: number) => ox + (x - xmin) * s;
  const Y = (y: number) => oy + (ymax - y) * s;
  for (const l of layout.layers) {
    for (const ring of l.polygons) {
      doc.moveTo(X(ring[0]![0]), Y(ring[0]![1]));
      for (const [x, y] of ring.slice(1)) doc.lineTo(X(x), Y(y));
      doc.closePath();
    }
    doc.lineWidth(0.6);
    if (l.name === 'cavity-traced') doc.fillColor('#4a6fa5', 0.45).strokeColor('#203a60').fillAndStroke('#4a6fa5', '#203a60');
    else if (l.name === 'leads') doc.fillColor('#9a9a9a', 0.5).fillAndStroke('#9a9a9a', '#555555');
    else if (l.name === 'cavity-drawn') doc.strokeColor('#111111').dash(2, { space: 2 }).stroke().undash();
    else doc.strokeColor('#c0392b').dash(3, { space: 1.5 }).stroke().undash();
  }
  doc.fillOpacity(1).fillColor('black').strokeColor('black');
  const box = layout.cavityBox;
  const wNm = box.xmax - box.xmin;
  const hNm = box.ymax - box.ymin;
  // Width below, height to the right, with extension ticks.
  const yb = Y(ymin) + 12;
  doc.lineWidth(0.5).moveTo(X(box.xmin), yb).lineTo(X(box.xmax), yb).stroke();
  doc
    .moveTo(X(box.xmin), yb - 3)
    .lineTo(X(box.xmin), yb + 3)
    .moveTo(X(box.xmax), yb - 3)
    .lineTo(X(box.xmax), yb + 3)
    .stroke();
  doc
    .font('Regular')
    .fontSize(8)
    .text(`${fmt(wNm, 5)} nm`, X(box.xmin), yb + 3, { width: X(box.xmax) - X(box.xmin), align: 'center' });
  const xr = X(xmax) + 8;
  doc.moveTo(xr, Y(box.ymin)).lineTo(xr, Y(box.ymax)).stroke();
  doc
    .moveTo(xr - 3, Y(box.ymin))
    .lineTo(xr + 3, Y(box.ymin))
    .moveTo(xr - 3, Y(box.ymax))
    .lineTo(xr + 3, Y(box.ymax))
    .stroke();
  doc.text(`${fmt(hNm, 5)} nm`, xr + 4, (Y(box.ymin) + Y(box.ymax)) / 2 - 4, { lineBreak: false });
}

/** Renders the sheet; resolves to the PDF bytes. */
export function renderSpecSheet(input: SpecSheetInput): Promise<Buffer> {
  const doc = new PDFDocument({
    size: 'A4',
    margin: 48,
    info: {
      Title: `Spec sheet: ${input.model.name} v${input.model.version}, E = ${fmt(input.figures.energy)} meV`,
      Author: 'Poleward',
      Subject: `Resonance ${input.resonanceId}`,
    },
  });
  doc.registerFont('Regular', FONTS.regular);
  doc.registerFont('Bold', FONTS.bold);
  doc.registerFont('Greek', FONTS.greek);
  doc.registerFont('GreekBold', FONTS.greekBold);
  doc.registerFont('Ext', FONTS.latinExt);
  doc.registerFont('ExtBold', FONTS.latinExtBold);
  const chunks: Buffer[] = [];
  doc.on('data', (c: Buffer) => chunks.push(c));
  const done = new Promise<Buffer>((resolve, reject) => {
    doc.on('end', () => resolve(Buffer.concat(chunks)));
    doc.on('error', reject);
  });

  const f = input.figures;
  const m = input.model;
  doc.fontSize(17);
  say(doc, `Fabrication spec sheet: ${m.name} v${m.version}`, true);
  doc.fontSize(9.5).fillColor('#444444');
  say(doc, `${input.groupName} · resonance ${input.resonanceId} · generated ${input.generatedAt.toISOString().slice(0, 16).replace('T', ' ')} UTC by Poleward`);
  doc.fillColor('black');

  doc
    .moveDown(0.5)
    .rect(doc.x, doc.y, doc.page.width - 96, 46)
    .fillAndStroke('#fff4e5', '#b26a00');
  doc.fillColor('#5a3500').fontSize(8.5);
  const cautionY = doc.y + 5;
  doc.y = cautionY;
  doc.x = 54;
  say(doc, STANDING_CAUTION, false, { width: doc.page.width - 108 });
  doc.fillColor('black');
  doc.x = 48;
  doc.y = cautionY + 46;

  heading(doc, 'Target figures');
  row(doc, 'Energy E', `${fmt(f.energy)} meV${input.tolerances.energyMeV !== null ? `  (tolerance ± ${fmt(input.tolerances.energyMeV, 4)} meV)` : ''}`);
  row(doc, 'Width Γ', `${fmt(f.width)} meV`);
  row(doc, 'Lifetime τ = ħ/Γ', `${fmt(f.lifetimePs)} ps`);
  row(
    doc,
    'Quality factor Q = E/Γ',
    `${fmt(f.quality, 5)}${input.tolerances.minQuality !== null ? `  (at least ${fmt(input.tolerances.minQuality, 5)} needed)` : ''}`,
  );
  row(doc, 'Partial widths', f.partialWidths.map((p) => `${p.lead} ${fmt(p.width, 4)} meV`).join(', ') || 'none');
  row(
    doc,
    'Petermann factor K',
    f.petermann === null
      ? 'not computed'
      : `${fmt(f.petermann, 4)}${f.petermann > 1.1 ? ' (non-orthogonal mode: a Breit-Wigner reading of the peak misleads)' : ''}`,
  );
  const flags = [
    f.bound ? 'bound state (Γ = 0 to rounding)' : null,
    f.nearThreshold ? 'near a channel threshold' : null,
    f.overlapping ? 'overlaps a neighbouring resonance' : null,
  ].filter(Boolean);
  row(doc, 'Flags', flags.length ? flags.join('; ') : 'none');

  heading(doc, 'Model');
  row(doc, 'Model and version', `${m.name}, version ${m.version}`);
  row(doc, 'Material', `${m.material} (m*/mₑ = ${fmt(m.massRatio, 4)})`.replace('ₑ', 'e'));
  row(doc, 'Lattice', `square, a = ${fmt(m.spacingNm, 4)} nm, ${m.nx} × ${m.ny} grid, ${m.siteCount} cavity sites`);
  row(doc, 'Field B', `${fmt(m.fieldT, 4)} T`);
  row(doc, 'Leads', m.leads.join('; ') || 'none');

  heading(doc, 'Validity of the lattice model at this energy');
  const v = input.validity;
  row(doc, 'Hopping t', `${fmt(v.hopping, 5)} meV; recommended E up to t/2 = ${fmt(v.energyCeiling, 4)} meV`);
  row(doc, 'Wavelength', `${fmt(v.wavelength, 4)} nm = ${fmt(v.wavelengthOverSpacing, 3)} lattice spacings`);
  row(doc, 'Dispersion error', `${fmt(100 * v.dispersionError, 3)} % against the parabola`);
  row(doc, 'Warnings', v.warnings.length ? v.warnings.join('; ') : 'none');

  heading(doc, 'Decision');
  row(doc, 'Proposed by', `${input.proposal.by}, ${input.proposal.at.toISOString().slice(0, 10)}: ${input.proposal.reason}`);
  row(
    doc,
    'Approved by',
    `${input.review.by}${input.review.at ? `, ${input.review.at.toISOString().slice(0, 10)}` : ''}${input.review.reason ? `: ${input.review.reason}` : ''}`,
  );
  if (input.batch) row(doc, 'Sent to fabrication', input.batch);
  if (input.measurement) {
    const e = input.measurement.energyComparison;
    const g = input.measurement.widthComparison;
    const sig = (s: number | null) => (s === null ? '' : `, ${fmt(s, 3)} σ`);
    row(
      doc,
      'Measured',
      `E = ${fmt(e.measured)} meV (${e.percent === null ? '' : `${fmt(e.percent, 3)} %`}${sig(e.sigmas)}); Γ = ${fmt(g.measured)} meV (${g.percent === null ? '' : `${fmt(g.percent, 3)} %`}${sig(g.sigmas)})`,
    );
  }

  // Second page: mode image and outline.
  doc.addPage();
  heading(doc, 'Mode |ψ|² and device outline');
  const top = doc.y + 4;
  const half = (doc.page.width - 96 - 16) / 2;
  if (input.modeImage) {
    doc.image(Buffer.from(input.modeImage.buffer, input.modeImage.byteOffset, input.modeImage.byteLength), 48, top, { fit: [half, half] });
  } else {
    doc.font('Regular').text('No mode image is stored for this resonance.', 48, top, { width: half });
  }
  drawLayout(doc, input.layout, 48 + half + 16, top, half, half);
  doc.x = 48;
  doc.y = top + half + 24;
  const L = input.layout;
  doc.fontSize(9.5);
  say(
    doc,
    `Cavity outline: ${L.outline === 'traced' ? 'traced from the site mask (the union of the lattice cells)' : 'traced from the site mask (filled), with the drawn shape the lattice approximates (dashed)'}; ` +
      `${L.siteCount} sites of ${fmt(L.spacingNm, 4)} nm, area ${fmt(L.cavityAreaNm2, 6)} nm². Bounding box of the cavity ${fmt(L.cavityBox.xmax - L.cavityBox.xmin, 5)} × ${fmt(L.cavityBox.ymax - L.cavityBox.ymin, 5)} nm. ` +
      'Frame: nm, origin at the lower-left corner of the grid, y up.',
    false,
    { width: doc.page.width - 96 },
  );
  heading(doc, 'Layer map (GDSII layer / datatype; DXF layer L<n>-<name>; SVG group layer-<n>)');
  for (const l of L.layers) row(doc, `${l.layer} / ${l.datatype}  ${l.name}`, l.description);
  for (const n of L.notDrawn) row(doc, 'not drawn', n);
  if (input.gdsRoundingNm > 0) {
    doc.moveDown(0.3);
    say(
      doc,
      `GDSII coordinates are rounded to the 1 nm database unit; the largest shift is ${fmt(input.gdsRoundingNm, 3)} nm. DXF and SVG keep the exact values.`,
      false,
      { width: doc.page.width - 96 },
    );
  }
  doc.end();
  return done;
}
