/**
 * The layout files of a model version (GDSII, DXF, SVG) and the layout itself, computed in a
 * compute-pool thread (compute-tasks.ts 'device-layout'): rasterising and tracing is geometry
 * work and never runs on the API's event loop.
 */
import { cavityModelSchema, formatIssuePath } from '../../shared/model/cavity-model.js';
import type { TracedOutline } from '../../shared/layout/outline-trace.js';
import { validateCavityModel } from '../../shared/model/model-validation.js';
import { buildDeviceLayout, layoutOfOutline, type DeviceLayout } from '../../shared/layout/device-layout.js';
import { writeGdsii } from '../../shared/layout/gdsii-writer.js';
import { ApiError } from '../http/error-handler.js';
import { layoutDxf } from './layout-dxf.js';
import { layoutSvg } from './layout-svg.js';

export interface LayoutFiles {
  layout: DeviceLayout;
  gds: Uint8Array;
  dxf: string;
  svg: string;
  /** Largest shift (nm) of a vertex rounded onto the GDSII 1 nm database grid (0 when a is a whole number of nm and nothing is curved). */
  gdsRoundingNm: number;
}

/** GDSII names: printable ASCII, at most 32 characters by convention. */
function gdsName(text: string): string {
  const clean = text
    .normalize('NFKD')
    .replace(/[^A-Za-z0-9_]+/g, '_')
    .replace(/^_+|_+$/g, '');
  return (clean || 'DEVICE').slice(0, 32).toUpperCase();
}

/** The outline and site count stored with a model version (null for a row the back-fill has not reached). */
export interface StoredOutline {
  outline: TracedOutline;
  siteCount: number;
}

/**
 * The layout and its files. With the version's stored outline the document is only parsed
 * (it was validated when the version was saved): nothing is rasterised or traced again.
 */
export function buildLayoutFiles(document: unknown, title: string, structureName: string, time: Date, stored: StoredOutline | null = null): LayoutFiles {
  const parsed = stored ? cavityModelSchema.safeParse(document) : null;
  const layout = parsed?.success && stored ? layoutOfOutline(parsed.data, stored.outline, stored.siteCount) : layoutOfDocument(document);
  let gdsRoundingNm = 0;
  const boundaries = layout.layers.flatMap((l) =>
    l.polygons.map((ring) => ({
      layer: l.layer,
      datatype: l.datatype,
      ring: ring.map(([x, y]) => {
        const rx = Math.round(x);
        const ry = Math.round(y);
        gdsRoundingNm = Math.max(gdsRoundingNm, Math.abs(rx - x), Math.abs(ry - y));
        return [rx, ry] as const;
      }),
    })),
  );
  const gds = writeGdsii({
    libraryName: 'POLEWARD',
    structureName: gdsName(structureName),
    userUnitsPerDatabaseUnit: 1e-3,
    metresPerDatabaseUnit: 1e-9,
    boundaries,
    time,
  });
  return { layout, gds, dxf: layoutDxf(layout), svg: layoutSvg(layout, title), gdsRoundingNm };
}

/** Validates (rasterises) the document and traces its mask: for a version without a stored outline. */
function layoutOfDocument(document: unknown): DeviceLayout {
  const checked = validateCavityModel(document);
  if (!checked.ok) {
    const first = checked.issues[0]!;
    throw new ApiError(
      422,
      'invalid_model',
      `The model of this resonance is no longer valid (${formatIssuePath(first.path)}: ${first.message}); no layout can be drawn.`,
    );
  }
  return buildDeviceLayout(checked.model, checked.mask);
}
