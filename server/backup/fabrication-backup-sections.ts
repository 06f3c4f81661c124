/**
 * Fabrication in the group backup: resonances imported from another group's catalogue
 * (`importedResonance`: no run and no fit, so the core and the fit sections leave them out),
 * the fabrication record of each resonance (`fabricationRecord`) and the comments
 * (`resonanceComment`). People are named by e-mail; a person who is not a member of the
 * target group is restored as "former member" (null). Notifications are not kept: they were
 * sent (or failed) in the source group.
 */
import { and, asc, eq, isNull } from 'drizzle-orm';
import { z } from 'zod';
import type { Queryable } from '../db/client.js';
import { resonances } from '../db/schema/catalogue.js';
import { resonanceComments, resonanceFabrication } from '../db/schema/fabrication.js';
import { authorEmails } from './author-emails.js';
import type { BackupSection } from './backup-section.js';

const id = z.uuid();
const when = z.iso.datetime({ offset: true });
const num = z.number().finite();
const person = z.string().max(320).nullable();
const iso = (d: Date | null) => (d ? d.toISOString() : null);

const importedResonanceRecord = z.object({
  type: z.literal('importedResonance'),
  id,
  modelId: id,
  modelVersionId: id,
  source: z.enum(['computed', 'fitted']),
  energy: num,
  width: num,
  lifetimePs: num.nullable(),
  quality: num.nullable(),
  partialWidths: z.array(z.object({ lead: z.string(), width: num })),
  petermann: num.nullable(),
  residual: num.nullable(),
  bound: z.boolean(),
  nearThreshold: z.boolean(),
  overlapping: z.boolean(),
  details: z.record(z.string(), z.unknown()),
  tags: z.array(z.string()),
  notes: z.string(),
  modelName: z.string(),
  modelVersion: z.number().int().positive(),
  family: z.string(),
  material: z.string(),
  fieldT: num,
  spacingNm: num,
  widthNm: num.nullable(),
  heightNm: num.nullable(),
  radiusNm: num.nullable(),
  lengthNm: num.nullable(),
  createdAt: when,
});

const fabricationRecord = z.object({
  type: z.literal('fabricationRecord'),
  resonanceId: id,
  state: z.enum(['candidate', 'under_review', 'approved', 'rejected', 'sent', 'measured']),
  reason: z.string(),
  toleranceEnergyMeV: num.nullable(),
  toleranceMinQuality: num.nullable(),
  proposedBy: person,
  proposedAt: when,
  reviewedBy: person,
  reviewedAt: when.nullable(),
  reviewReason: z.string().nullable(),
  batch: z.string().nullable(),
  sentAt: when.nullable(),
  measuredEnergy: num.nullable(),
  measuredWidth: num.nullable(),
  measuredEnergySigma: num.nullable(),
  measuredWidthSigma: num.nullable(),
  measuredSource: z.enum(['typed', 'fit']).nullable(),
  measuredFitId: id.nullable(),
  measuredBy: person,
  measuredAt: when.nullable(),
  updatedAt: when,
});

const commentRecord = z.object({
  type: z.literal('resonanceComment'),
  resonanceId: id,
  author: person,
  body: z.string(),
  mentions: z.array(z.string().max(320)),
  createdAt: when,
});

type ImportedRecord = z.infer<typeof importedResonanceRecord>;
type FabRecord = z.infer<typeof fabricationRecord>;
type CommentRecord = z.infer<typeof commentRecord>;

const importedSection: BackupSection<ImportedRecord> = {
  type: 'importedResonance',
  schema: importedResonanceRecord,
  async *records(q, groupId) {
    const rows = await q
      .select()
      .from(resonances)
      .where(and(eq(resonances.groupId, groupId), isNull(resonances.runId), isNull(resonances.fitId)))
      .orderBy(asc(resonances.createdAt), asc(resonances.energy));
    for (const r of rows) {
      yield {
        type: 'importedResonance' as const,
        id: r.id,
        modelId: r.modelId,
        modelVersionId: r.modelVersionId,
        source: r.source,
        energy: r.energy,
        width: r.width,
        lifetimePs: r.lifetimePs,
        quality: r.quality,
        partialWidths: r.partialWidths,
        petermann: r.petermann,
        residual: r.residual,
        bound: r.bound,
        nearThreshold: r.nearThreshold,
        overlapping: r.overlapping,
        details: r.details,
        tags: r.tags,
        notes: r.notes,
        modelName: r.modelName,
        modelVersion: r.modelVersion,
        family: r.family,
        material: r.material,
        fieldT: r.fieldT,
        spacingNm: r.spacingNm,
        widthNm: r.widthNm,
        heightNm: r.heightNm,
        radiusNm: r.radiusNm,
        lengthNm: r.lengthNm,
        createdAt: r.createdAt.toISOString(),
      };
    }
  },
  label: (r) => `importedResonance ${r.id}`,
  provides: (r) => ({ kind: 'resonances', id: r.id }),
  references: (r) => [
    { field: 'modelId', kind: 'models', id: r.modelId },
    { field: 'modelVersionId', kind: 'modelVersions', id: r.modelVersionId },
  ],
  async restore(tx, groupId, records, ids) {
    for (const r of records) {
      const { type: _type, id: oldId, createdAt, ...row } = r;
      const [inserted] = await tx
        .insert(resonances)
        .values({
          ...row,
          groupId,
          runId: null,
          fitId: null,
          idx: null,
          modelId: ids.models.get(r.modelId)!,
          modelVersionId: ids.modelVersions.get(r.modelVersionId)!,
          createdAt: new Date(createdAt),
        })
        .returning({ id: resonances.id });
      ids.resonances.set(oldId, inserted!.id);
    }
  },
};

const fabricationSection: BackupSection<FabRecord> = {
  type: 'fabricationRecord',
  schema: fabricationRecord,
  async *records(q, groupId) {
    const email = authorEmails(q);
    const rows = await q.select().from(resonanceFabrication).where(eq(resonanceFabrication.groupId, groupId)).orderBy(asc(resonanceFabrication.proposedAt));
    for (const f of rows) {
      yield {
        type: 'fabricationRecord' as const,
        resonanceId: f.resonanceId,
        state: f.state as FabRecord['state'],
        reason: f.reason,
        toleranceEnergyMeV: f.toleranceEnergyMeV,
        toleranceMinQuality: f.toleranceMinQuality,
        proposedBy: await email(f.proposedBy),
        proposedAt: f.proposedAt.toISOString(),
        reviewedBy: await email(f.reviewedBy),
        reviewedAt: iso(f.reviewedAt),
        reviewReason: f.reviewReason,
        batch: f.batch,
        sentAt: iso(f.sentAt),
        measuredEnergy: f.measuredEnergy,
        measuredWidth: f.measuredWidth,
        measuredEnergySigma: f.measuredEnergySigma,
        measuredWidthSigma: f.measuredWidthSigma,
        measuredSource: (f.measuredSource as FabRecord['measuredSource']) ?? null,
        measuredFitId: f.measuredFitId,
        measuredBy: await email(f.measuredBy),
        measuredAt: iso(f.measuredAt),
        updatedAt: f.updatedAt.toISOString(),
      };
    }
  },
  label: (f) => `fabricationRecord of ${f.resonanceId}`,
  references: (f) => [
    { field: 'resonanceId', kind: 'resonances', id: f.resonanceId },
    { field: 'measuredFitId', kind: 'fits', id: f.measuredFitId },
  ],
  async restore(tx, groupId, records, ids) {
    const who = (e: string | null) => (e ? (ids.people.get(e.toLowerCase()) ?? null) : null);
    const at = (s: string | null) => (s ? new Date(s) : null);
    for (const f of records) {
      await tx.insert(resonanceFabrication).values({
        resonanceId: ids.resonances.get(f.resonanceId)!,
        groupId,
        state: f.state,
        reason: f.reason,
        toleranceEnergyMeV: f.toleranceEnergyMeV,
        toleranceMinQuality: f.toleranceMinQuality,
        proposedBy: who(f.proposedBy),
        proposedAt: new Date(f.proposedAt),
        reviewedBy: who(f.reviewedBy),
        reviewedAt: at(f.reviewedAt),
        reviewReason: f.reviewReason,
        batch: f.batch,
        sentAt: at(f.sentAt),
        measuredEnergy: f.measuredEnergy,
        measuredWidth: f.measuredWidth,
        measuredEnergySigma: f.measuredEnergySigma,
        measuredWidthSigma: f.measuredWidthSigma,
        measuredSource: f.measuredSource,
        measuredFitId: f.measuredFitId ? (ids.fits.get(f.measuredFitId) ?? null) : null,
        measuredBy: who(f.measuredBy),
        measuredAt: at(f.measuredAt),
        updatedAt: new Date(f.updatedAt),
      });
    }
  },
};

const commentSection: BackupSection<CommentRecord> = {
  type: 'resonanceComment',
  schema: commentRecord,
  async *records(q: Queryable, groupId: string) {
    const email = authorEmails(q);
    const rows = await q.select().from(resonanceComments).where(eq(resonanceComments.groupId, groupId)).orderBy(asc(resonanceComments.createdAt));
    for (const c of rows) {
      const mentions: string[] = [];
      for (const m of c.mentions) {
        const e = await email(m);
        if (e) mentions.push(e);
      }
      yield {
        type: 'resonanceComment' as const,
        resonanceId: c.resonanceId,
        author: await email(c.authorId),
        body: c.body,
        mentions,
        createdAt: c.createdAt.toISOString(),
      };
    }
  },
  label: (c) => `resonanceComment on ${c.resonanceId}`,
  references: (c) => [{ field: 'resonanceId', kind: 'resonances', id: c.resonanceId }],
  async restore(tx, groupId, records, ids) {
    for (const c of records) {
      await tx.insert(resonanceComments).values({
        groupId,
        resonanceId: ids.resonances.get(c.resonanceId)!,
        authorId: c.author ? (ids.people.get(c.author.toLowerCase()) ?? null) : null,
        body: c.body,
        mentions: c.mentions.map((e) => ids.people.get(e.toLowerCase())).filter((x): x is string => !!x),
        createdAt: new Date(c.createdAt),
      });
    }
  },
};

/** Before the mode maps, which may refer to an imported resonance. */
export const importedResonanceSections = [importedSection];
export const fabricationBackupSections = [fabricationSection, commentSection];
