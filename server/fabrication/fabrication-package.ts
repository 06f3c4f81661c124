import { writeAudit } from '../audit/audit-log.js';
/**
 * The fabrication package of an approved (sent, measured) resonance: the spec sheet, the
 * layout in GDSII, DXF and SVG, a README with the layer map, and the figures as JSON; one
 * file at a time or all in one ZIP archive. The layout is computed in the compute pool.
 */
import { and, eq } from 'drizzle-orm';
import { zipSync, strToU8 } from 'fflate';
import { cavityModelSchema, modelMassRatio } from '../../shared/model/cavity-model.js';
import { findMaterial } from '../../shared/model/materials.js';
import { deriveFigures } from '../../shared/model/derived-figures.js';
import { stateWords, type FabricationState } from '../../shared/fabrication/fabrication-states.js';
import type { Compute } from '../compute/compute-pool.js';
import type { Db } from '../db/client.js';
import { modeImages, resonances } from '../db/schema/catalogue.js';
import { resonanceFabrication } from '../db/schema/fabrication.js';
import { researchGroups } from '../db/schema/groups.js';
import { modelVersions } from '../db/schema/models.js';
import { ApiError } from '../http/error-handler.js';
import { resonanceNotFound } from '../catalogue/catalogue-service.js';
import { userNames } from './fabrication-repository.js';
import { PACKAGE_STATES } from './fabrication-service.js';
import type { LayoutFiles } from './layout-files.js';
import { STANDING_CAUTION, type SpecSheetInput } from './spec-sheet.js';
import { compareFigure } from '../../shared/fabrication/measurement-comparison.js';
import type { PackageFile } from '../../shared/api/fabrication.js';

const PACKAGE_MEDIA_TYPES: Record<PackageFile, string> = {
  'package.zip': 'application/zip',
  'spec.pdf': 'application/pdf',
  'layout.gds': 'application/octet-stream',
  'layout.dxf': 'application/dxf',
  'layout.svg': 'image/svg+xml',
};

interface PackageAnswer {
  fileName: string;
  mediaType: string;
  bytes: Uint8Array;
}

function slug(text: string): string {
  return (
    text
      .normalize('NFKD')
      .replace(/[^A-Za-z0-9]+/g, '-')
      .replace(/^-+|-+$/g, '')
      .toLowerCase()
      .slice(0, 40) || 'device'
  );
}

export class FabricationPackages {
  constructor(
    private readonly db: Db,
    private readonly compute: Compute,
  ) {}

  /** Each download is recorded in the group's activity. */
  async recordDownload(groupId: string, actorId: string, fileName: string, resonanceId: string, which: string): Promise<void> {
    await writeAudit(this.db, { groupId, actorId, action: 'fabrication.downloaded', subject: fileName, details: { resonanceId, file: which } });
  }

  private async source(groupId: string, resonanceId: string) {
    const [r] = await this.db
      .select({
        r: resonances,
        groupName: researchGroups.name,
        document: modelVersions.document,
        outline: modelVersions.outline,
        siteCount: modelVersions.siteCount,
      })
      .from(resonances)
      .innerJoin(researchGroups, eq(researchGroups.id, resonances.groupId))
      .innerJoin(modelVersions, eq(modelVersions.id, resonances.modelVersionId))
      .where(and(eq(resonances.id, resonanceId), eq(resonances.groupId, groupId)));
    if (!r) throw resonanceNotFound();
    const [f] = await this.db.select().from(resonanceFabrication).where(eq(resonanceFabrication.resonanceId, resonanceId));
    const state = (f?.state ?? null) as FabricationState | null;
    if (!f || !PACKAGE_STATES.includes(state!)) {
      throw new ApiError(409, 'not_approved', `This resonance is ${stateWords(state)}: a fabrication package exists only once it is approved.`);
    }
    return { ...r, f };
  }

  /** One file of the package, or the whole archive. */
  async file(groupId: string, resonanceId: string, which: PackageFile, signal?: AbortSignal): Promise<PackageAnswer> {
    const s = await this.source(groupId, resonanceId);
    const r = s.r;
    const base = `poleward-${slug(r.modelName)}-v${r.modelVersion}-E${Number(r.energy.toPrecision(6))}meV`;
    const title = `${r.modelName} v${r.modelVersion}, resonance at E = ${Number(r.energy.toPrecision(6))} meV`;
    const files = await this.compute.run(
      {
        kind: 'device-layout',
        document: s.document,
        title,
        structureName: `${r.modelName}_V${r.modelVersion}`,
        time: new Date(),
        stored: s.outline ? { outline: s.outline, siteCount: s.siteCount } : null,
      },
      signal,
    );
    if (which === 'layout.gds') return { fileName: `${base}.gds`, mediaType: PACKAGE_MEDIA_TYPES[which], bytes: files.gds };
    if (which === 'layout.dxf') return { fileName: `${base}.dxf`, mediaType: PACKAGE_MEDIA_TYPES[which], bytes: strToU8(files.dxf) };
    if (which === 'layout.svg') return { fileName: `${base}.svg`, mediaType: PACKAGE_MEDIA_TYPES[which], bytes: strToU8(files.svg) };
    const pdf = await this.compute.run({ kind: 'spec-sheet', input: await this.sheetInput(s, files) }, signal);
    if (which === 'spec.pdf') return { fileName: `${base}-spec.pdf`, mediaType: PACKAGE_MEDIA_TYPES[which], bytes: pdf };
    const zip = zipSync(
      {
        [`${base}/README.txt`]: strToU8(this.readme(title, files)),
        [`${base}/${base}-spec.pdf`]: [pdf, { level: 0 }],
        [`${base}/${base}.gds`]: files.gds,
        [`${base}/${base}.dxf`]: strToU8(files.dxf),
        [`${base}/${base}.svg`]: strToU8(files.svg),
        [`${base}/resonance.json`]: strToU8(JSON.stringify(this.figuresJson(s, files), null, 2)),
      },
      { level: 6, mtime: new Date() },
    );
    return { fileName: `${base}.zip`, mediaType: PACKAGE_MEDIA_TYPES['package.zip'], bytes: zip };
  }

  private async sheetInput(s: Awaited<ReturnType<FabricationPackages['source']>>, files: LayoutFiles): Promise<SpecSheetInput> {
    const r = s.r;
    const model = cavityModelSchema.parse(s.document);
    const massRatio = modelMassRatio(model);
    const derived = deriveFigures(model, files.layout.siteCount, r.energy);
    const names = await userNames(this.db, [s.f.proposedBy, s.f.reviewedBy, s.f.measuredBy]);
    const [image] = await this.db
      .select({ png: modeImages.png })
      .from(modeImages)
      .where(and(eq(modeImages.resonanceId, r.id), eq(modeImages.size, 'full')));
    const f = s.f;
    return {
      groupName: s.groupName,
      resonanceId: r.id,
      generatedAt: new Date(),
      model: {
        name: r.modelName,
        version: r.modelVersion,
        material: findMaterial(r.material)?.label ?? r.material,
        massRatio,
        spacingNm: model.spacing,
        nx: model.grid.nx,
        ny: model.grid.ny,
        siteCount: files.layout.siteCount,
        fieldT: model.field,
        leads: model.leads.map((l, k) => `${l.name ?? `lead ${k}`}: ${l.side}, ${l.width} sites from ${l.start}${l.offset ? `, offset ${l.offset} meV` : ''}`),
      },
      figures: {
        energy: r.energy,
        width: r.width,
        lifetimePs: r.lifetimePs,
        quality: r.quality,
        partialWidths: r.partialWidths,
        petermann: r.petermann,
        bound: r.bound,
        nearThreshold: r.nearThreshold,
        overlapping: r.overlapping,
      },
      tolerances: { energyMeV: f.toleranceEnergyMeV, minQuality: f.toleranceMinQuality },
      validity: { ...derived.validity!, hopping: derived.hopping, energyCeiling: derived.energyCeiling },
      proposal: { by: (f.proposedBy && names.get(f.proposedBy)) || '(former member)', at: f.proposedAt, reason: f.reason },
      review: { by: (f.reviewedBy && names.get(f.reviewedBy)) || '(former member)', at: f.reviewedAt, reason: f.reviewReason },
      batch: f.batch,
      measurement:
        f.measuredEnergy !== null && f.measuredWidth !== null && f.measuredAt
          ? {
              energy: f.measuredEnergy,
              width: f.measuredWidth,
              energyUncertainty: f.measuredEnergySigma,
              widthUncertainty: f.measuredWidthSigma,
              source: f.measuredSource === 'fit' ? 'fit' : 'typed',
              fitId: f.measuredFitId,
              energyComparison: compareFigure(r.energy, f.measuredEnergy, f.measuredEnergySigma),
              widthComparison: compareFigure(r.width, f.measuredWidth, f.measuredWidthSigma),
              measuredBy: f.measuredBy ? (names.get(f.measuredBy) ?? null) : null,
              measuredAt: f.measuredAt.toISOString(),
            }
          : null,
      layout: files.layout,
      gdsRoundingNm: files.gdsRoundingNm,
      modeImage: image?.png ?? null,
    };
  }

  private figuresJson(s: Awaited<ReturnType<FabricationPackages['source']>>, files: LayoutFiles) {
    const r = s.r;
    return {
      units: { energy: 'meV', width: 'meV', lifetimePs: 'ps (null: infinite)', quality: 'E/Γ', lengths: 'nm' },
      caution: STANDING_CAUTION,
      resonanceId: r.id,
      model: { name: r.modelName, version: r.modelVersion, material: r.material, spacingNm: r.spacingNm, fieldT: r.fieldT },
      energy: r.energy,
      width: r.width,
      lifetimePs: r.lifetimePs,
      quality: r.quality,
      partialWidths: r.partialWidths,
      petermann: r.petermann,
      flags: { bound: r.bound, nearThreshold: r.nearThreshold, overlapping: r.overlapping },
      tolerances: { energyMeV: s.f.toleranceEnergyMeV, minQuality: s.f.toleranceMinQuality },
      state: s.f.state,
      batch: s.f.batch,
      layout: {
        outline: files.layout.outline,
        siteCount: files.layout.siteCount,
        cavityAreaNm2: files.layout.cavityAreaNm2,
        cavityBox: files.layout.cavityBox,
        layers: files.layout.layers.map((l) => ({
          layer: l.layer,
          datatype: l.datatype,
          name: l.name,
          description: l.description,
          polygons: l.polygons.length,
        })),
        notDrawn: files.layout.notDrawn,
      },
    };
  }

  private readme(title: string, files: LayoutFiles): string {
    const L = files.layout;
    return [
      `Poleward fabrication package: ${title}`,
      '',
      STANDING_CAUTION,
      '',
      'Files',
      '  *-spec.pdf      spec sheet: target figures, tolerances, validity, mode image, outline, decision',
      '  *.gds           layout, GDSII stream: database unit 1 nm, user unit 1 µm, one structure',
      '  *.dxf           layout, DXF: drawing units nm, one DXF layer per layout layer (L<n>-<name>)',
      '  *.svg           layout, SVG: user units nm, y up, one group per layer (id layer-<n>)',
      '  resonance.json  the figures as numbers',
      '',
      'Frame: nm, x right, y up, origin at the lower-left corner of the model grid; the cell of',
      `lattice site (i, j) is [i·a, (i+1)·a] × [j·a, (j+1)·a] with a = ${L.spacingNm} nm.`,
      `Cavity outline: ${L.outline} (${L.siteCount} sites, area ${L.cavityAreaNm2} nm²).`,
      '',
      'Layer map (GDSII layer / datatype)',
      ...L.layers.map((l) => `  ${String(l.layer).padStart(3)} / ${l.datatype}  ${l.name}: ${l.description}`),
      ...L.notDrawn.map((n) => `  not drawn: ${n}`),
      ...(files.gdsRoundingNm > 0
        ? ['', `GDSII coordinates are rounded to 1 nm (largest shift ${files.gdsRoundingNm.toPrecision(3)} nm); DXF and SVG keep the exact values.`]
        : []),
      '',
    ].join('\n');
  }
}
