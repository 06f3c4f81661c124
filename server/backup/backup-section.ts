/**
 * What a backup section is (backup-sections.ts lists them): the shape each kind of
 * group data beyond the core implements to join the archive.
 */
import type { z } from 'zod';
import type { Queryable } from '../db/client.js';

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
