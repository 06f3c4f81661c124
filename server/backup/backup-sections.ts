/**
 * The extension point of the group backup: a later kind of group data (peak fits,
 * mode maps, fabrication records…) joins the archive by adding a section here, with
 * no change to the format's core. Its records follow the core ones, are validated
 * with its own zod schema and its links checked before anything is written, and are
 * restored in the same transaction with the core ids (and those of earlier
 * sections) already remapped.
 */
import type { BackupSection } from './backup-section.js';
import { fitsBackupSections } from './fits-backup-sections.js';
import { modeMapsBackupSections } from './mode-maps-backup-sections.js';
import { fabricationBackupSections, importedResonanceSections } from './fabrication-backup-sections.js';

export type { IdKind, RestoredIds } from './backup-section.js';

/** Registered sections, in archive order: a record's links point only at core records or earlier sections. */
export const backupSections: BackupSection[] = [
  ...fitsBackupSections,
  ...importedResonanceSections,
  ...modeMapsBackupSections,
  ...fabricationBackupSections,
] as unknown as BackupSection[];
