/**
 * The extension point of the group backup: a later kind of group data (peak fits,
 * fabrication records…) joins the archive by adding a section here, with no change
 * to the format's core. Its records follow the core ones, are validated with its
 * own zod schema before anything is written, and are restored in the same
 * transaction with the core ids already remapped.
 */
import type { z } from 'zod';
import type { Queryable } from '../db/client.js';

/** New ids of the restored core rows, by their id in the archive. */
export interface RestoredIds {
  models: Map<string, string>;
  modelVersions: Map<string, string>;
  runs: Map<string, string>;
  resonances: Map<string, string>;
  /** User id of a member of the target group, by e-mail (people are named by e-mail in the archive). */
  people: Map<string, string>;
}

export interface BackupSection<R extends { type: string } = { type: string }> {
  /** The `type` of this section's records; must not clash with a core type. */
  type: string;
  schema: z.ZodType<R>;
  /** The group's records, in a stable order. */
  records(q: Queryable, groupId: string): AsyncIterable<R>;
  /** Archive ids this record refers to that must exist (e.g. `{ resonances: [r.resonanceId] }`). */
  references?(record: R): Partial<Record<'models' | 'modelVersions' | 'runs' | 'resonances', string[]>>;
  /** Inserts the records into the target group, inside the restore transaction. */
  restore(tx: Queryable, groupId: string, records: R[], ids: RestoredIds): Promise<void>;
}

/** Registered sections, in archive order. Empty until fits and fabrication records arrive. */
export const backupSections: BackupSection[] = [];
