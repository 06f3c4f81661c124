import { Readable } from 'node:stream';
import { createGzip } from 'node:zlib';
import { and, asc, eq, inArray } from 'drizzle-orm';
import type { Queryable } from '../db/client.js';
import { modeImages, resonanceModes, resonances } from '../db/schema/catalogue.js';
import { memberships, researchGroups } from '../db/schema/groups.js';
import { cavityModels, modelVersions } from '../db/schema/models.js';
import { runs, spectra } from '../db/schema/runs.js';
import { users } from '../db/schema/users.js';
import { BACKUP_FORMAT, BACKUP_FORMAT_VERSION, type CoreRecord } from './backup-format.js';
import { backupSections } from './backup-sections.js';

const iso = (d: Date | null) => (d ? d.toISOString() : null);
/** Resonances read per query: their mode vectors and images are the bulk of a backup. */
const RESONANCE_BATCH = 100;

/**
 * Every record of one group, in archive order, read a batch at a time so a large
 * group never sits in memory whole. `includeMembers` adds the member list (names,
 * e-mails, roles), which a restore uses only to re-attach authorship.
 */
async function* groupBackupRecords(q: Queryable, groupId: string, includeMembers: boolean): AsyncGenerator<CoreRecord | { type: string }> {
  const [group] = await q.select().from(researchGroups).where(eq(researchGroups.id, groupId));
  const counts: Record<string, number> = {};
  const count = (type: string) => (counts[type] = (counts[type] ?? 0) + 1);
  yield {
    type: 'header',
    format: BACKUP_FORMAT,
    version: BACKUP_FORMAT_VERSION,
    createdAt: new Date().toISOString(),
    group: { name: group!.name, slug: group!.slug },
  };

  const people = new Map<string, string>();
  for (const u of await q
    .select({ id: users.id, email: users.email, name: users.name })
    .from(users)
    .innerJoin(memberships, eq(memberships.userId, users.id))
    .where(eq(memberships.groupId, groupId))) {
    people.set(u.id, u.email);
  }
  const emailOf = async (userId: string | null) => {
    if (!userId) return null;
    if (!people.has(userId)) {
      const [u] = await q.select({ email: users.email }).from(users).where(eq(users.id, userId));
      people.set(userId, u?.email ?? '');
    }
    return people.get(userId) || null;
  };

  if (includeMembers) {
    const rows = await q
      .select({ email: users.email, name: users.name, role: memberships.role })
      .from(memberships)
      .innerJoin(users, eq(users.id, memberships.userId))
      .where(eq(memberships.groupId, groupId))
      .orderBy(asc(users.email));
    for (const m of rows) {
      count('member');
      yield { type: 'member', ...m };
    }
  }

  // Orders follow what a restore keeps (times, version numbers, run order, pole index), never
  // ids, so the archive of a restored group lists its records in the same order.
  const groupModels = await q.select().from(cavityModels).where(eq(cavityModels.groupId, groupId)).orderBy(asc(cavityModels.createdAt), asc(cavityModels.name));
  const modelOrder = new Map(groupModels.map((m, k) => [m.id, k]));
  for (const m of groupModels) {
    count('model');
    yield {
      type: 'model',
      id: m.id,
      name: m.name,
      latestVersion: m.latestVersion,
      referenceKey: m.referenceKey,
      createdBy: await emailOf(m.createdBy),
      createdAt: iso(m.createdAt)!,
      updatedAt: iso(m.updatedAt)!,
    };
  }
  const versions = await q.select().from(modelVersions).where(eq(modelVersions.groupId, groupId));
  versions.sort((a, b) => modelOrder.get(a.modelId)! - modelOrder.get(b.modelId)! || a.version - b.version);
  for (const v of versions) {
    // The derived figures and the outline are not in the archive: the restore computes the
    // figures from the document, the start-up back-fill traces the outline.
    const { groupId: _g, createdBy, createdAt, document, derived: _d, outline: _o, ...rest } = v;
    count('modelVersion');
    yield { type: 'modelVersion', ...rest, document: document as Record<string, unknown>, createdBy: await emailOf(createdBy), createdAt: iso(createdAt)! };
  }
  const groupRuns = await q.select().from(runs).where(eq(runs.groupId, groupId)).orderBy(asc(runs.createdAt), asc(runs.kind), asc(runs.note));
  for (const r of groupRuns) {
    count('run');
    yield {
      type: 'run',
      id: r.id,
      modelVersionId: r.modelVersionId,
      kind: r.kind,
      status: r.status,
      window: r.window,
      note: r.note,
      progressStage: r.progressStage,
      progressFraction: r.progressFraction,
      attempt: r.attempt,
      error: r.error,
      engineVersion: r.engineVersion,
      thresholds: r.thresholds,
      certificate: r.certificate,
      stats: r.stats,
      estimate: r.estimate,
      resonanceCount: r.resonanceCount,
      createdBy: await emailOf(r.createdBy),
      createdAt: iso(r.createdAt)!,
      startedAt: iso(r.startedAt),
      finishedAt: iso(r.finishedAt),
    };
  }
  for (const run of groupRuns) {
    const [s] = await q.select().from(spectra).where(eq(spectra.runId, run.id));
    if (!s) continue;
    count('spectrum');
    yield {
      type: 'spectrum',
      runId: s.runId,
      energies: s.energies,
      pairs: s.pairs,
      transmission: s.transmission,
      residual: s.residual,
      reflection: s.reflection,
      createdAt: iso(s.createdAt)!,
    };
  }

  // Computed resonances run by run, then their modes and images in batches. Fitted ones (a
  // fit of a run's spectrum also names the run) hang on their fit: see fits-backup-sections.ts.
  for (const run of groupRuns) {
    const rows = await q
      .select()
      .from(resonances)
      .where(and(eq(resonances.runId, run.id), eq(resonances.source, 'computed')))
      .orderBy(asc(resonances.idx));
    for (const r of rows) {
      const { groupId: _g, searchText: _s, source: _src, fitId: _f, createdAt, ...rest } = r;
      count('resonance');
      yield { type: 'resonance', ...rest, createdAt: iso(createdAt)! } as CoreRecord;
    }
    for (let k = 0; k < rows.length; k += RESONANCE_BATCH) {
      const ids = rows.slice(k, k + RESONANCE_BATCH).map((r) => r.id);
      const at = new Map(ids.map((id, n) => [id, n]));
      const modes = await q.select().from(resonanceModes).where(inArray(resonanceModes.resonanceId, ids));
      modes.sort((a, b) => at.get(a.resonanceId)! - at.get(b.resonanceId)!);
      for (const m of modes) {
        count('mode');
        yield { type: 'mode', resonanceId: m.resonanceId, sites: m.sites, vector: m.vector.toString('base64') };
      }
      const images = await q.select().from(modeImages).where(inArray(modeImages.resonanceId, ids));
      images.sort((a, b) => at.get(a.resonanceId)! - at.get(b.resonanceId)! || a.size.localeCompare(b.size));
      for (const i of images) {
        count('modeImage');
        yield { type: 'modeImage', resonanceId: i.resonanceId, size: i.size, width: i.width, height: i.height, etag: i.etag, png: i.png.toString('base64') };
      }
    }
  }

  for (const section of backupSections) {
    for await (const r of section.records(q, groupId)) {
      count(section.type);
      yield r;
    }
  }
  yield { type: 'end', counts };
}

/** The archive as a gzip stream (compression runs on libuv's thread pool, off the event loop). */
export function groupBackupStream(q: Queryable, groupId: string, includeMembers: boolean): NodeJS.ReadableStream {
  const lines = (async function* () {
    for await (const r of groupBackupRecords(q, groupId, includeMembers)) yield JSON.stringify(r) + '\n';
  })();
  return Readable.from(lines).pipe(createGzip());
}
