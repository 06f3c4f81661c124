/**
 * The extension point of the group backup: a later kind of group data (peak fits,
 * mode maps, fabrication records…) joins the archive by adding a section here, with
 * no change to the format's core. Its records follow the core ones, are validated
 * with its own zod schema and its links checked before anything is written, and are
 * restored in the same transaction with the core ids (and those of earlier
 * sections) already remapped.
 */
import type { z } from 'zod';
import type { Queryable } from '../db/client.js';
import { fitsBackupSections } from './fits-backup-sections.js';
import { modeMapsBackupSections } from './mode-maps-backup-sections.js';
import { fabricationBackupSections, importedResonanceSections } from './fabrication-backup-sections.js';

/** The kinds of archive ids a record can refer to. */
export type IdKind = 'models' | 'modelVersions' | 'runs' | 'resonances' | 'traces' | 'fits';

/** New ids of the restored rows, by their id in the archive. */
export interface RestoredIds {
  models: Map<string, string>;
  modelVersions: Map<string, string>;
  runs: Map<string, string>;
  /** Computed and fitted resonances. */
  resonances: Map<string, string>;
  traces: Map<string, string>;
  fits: Map<string, string>;
  /** User id of a member of the target group, by e-mail (people are named by e-mail in the archive). */
  people: Map<string, string>;
}

export interface BackupSection<R extends { type: string } = { type: string }> {
  /** The `type` of this section's records; must not clash with a core type. */
  type: string;
  schema: z.ZodType<R>;
  /** The group's records, in a stable order that does not depend on ids. */
  records(q: Queryable, groupId: string): AsyncIterable<R>;
  /** How a record is named in an issue, e.g. `peakFit <id>`. */
  label(record: R): string;
  /** The archive id this record brings (a fit's own id), checked unique and given a new id on restore. */
  provides?(record: R): { kind: IdKind; id: string } | null;
  /** Archive ids this record refers to, by field; a null id is an absent (optional) link. */
  references?(record: R): { field: string; kind: IdKind; id: string | null }[];
  /** Checks of the record's own content beyond its schema (byte lengths…), by field. */
  check?(record: R): { field: string; message: string }[];
  /** Inserts the records into the target group, inside the restore transaction. */
  restore(tx: Queryable, groupId: string, records: R[], ids: RestoredIds): Promise<void>;
}

/** Registered sections, in archive order: a record's links point only at core records or earlier sections. */
export const backupSections: BackupSection[] = [...fitsBackupSections, ...importedResonanceSections, ...modeMapsBackupSections, ...fabricationBackupSections] as unknown as BackupSection[];
