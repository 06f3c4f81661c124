import type { RunCertificate, RunEstimate } from '../../shared/api/runs.js';
import { createInterface } from 'node:readline';
import { Transform, type Readable } from 'node:stream';
import { createGunzip } from 'node:zlib';
import { randomUUID } from 'node:crypto';
import { count, eq, sql } from 'drizzle-orm';
import type { z } from 'zod';
import { writeAudit } from '../audit/audit-log.js';
import type { Db, Queryable } from '../db/client.js';
import { modeImages, resonanceModes, resonances } from '../db/schema/catalogue.js';
import { measuredTraces } from '../db/schema/fits.js';
import { memberships } from '../db/schema/groups.js';
import { cavityModels, modelVersions } from '../db/schema/models.js';
import { figuresOfStored } from '../models/model-figures.js';
import { runs, spectra } from '../db/schema/runs.js';
import { runStore } from '../runs/run-store.js';
import { users } from '../db/schema/users.js';
import { ApiError, type FieldIssue } from '../http/error-handler.js';
import { coreRecord, MAX_RESTORE_BYTES, type CoreRecord, type RecordOf } from './backup-format.js';
import { backupSections, type IdKind, type RestoredIds } from './backup-sections.js';

/** Issues reported at most; past this the file is plainly not a good backup. */
const MAX_ISSUES = 50;
const PNG_SIGNATURE = Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]);

type Core = { [T in CoreRecord['type']]: RecordOf<T>[] };

interface ParsedBackup {
  core: Core;
  sections: Map<string, { type: string }[]>;
  lines: number;
}

function invalid(issues: FieldIssue[]): ApiError {
  const more = issues.length >= MAX_ISSUES ? ` (the first ${MAX_ISSUES} shown)` : '';
  return new ApiError(400, 'invalid_backup', `The backup was not restored: ${issues.length} problem(s) found${more}. Nothing was written.`, issues);
}

/**
 * Reads and validates a whole archive before anything is written: gzip, one JSON
 * object per line, every record against its zod schema, the header first and the
 * `end` record last with matching counts, and every reference inside the archive.
 * Streams the input (decompression on libuv's pool, line by line), so the event
 * loop is never held for long. Throws a 400 listing what is wrong and where
 * ("line 12 (resonance) energy: …"), or a 413 past MAX_RESTORE_BYTES.
 */
export async function readBackup(input: Readable, maxBytes = MAX_RESTORE_BYTES): Promise<ParsedBackup> {
  const core = {
    header: [],
    member: [],
    model: [],
    modelVersion: [],
    run: [],
    spectrum: [],
    resonance: [],
    mode: [],
    modeImage: [],
    end: [],
  } as unknown as Core;
  const sections = new Map<string, { type: string }[]>(backupSections.map((s) => [s.type, []]));
  const issues: FieldIssue[] = [];
  const issue = (path: string, message: string) => {
    if (issues.length < MAX_ISSUES) issues.push({ path, message });
  };
  let bytes = 0;
  const cap = new Transform({
    transform(chunk: Buffer, _enc, done) {
      bytes += chunk.length;
      if (bytes > maxBytes)
        done(new ApiError(413, 'backup_too_large', `The backup is larger than ${maxBytes / 1024 / 1024} MB once decompressed; it cannot be restored here.`));
      else done(null, chunk);
    },
  });
  const gunzip = createGunzip();
  input.on('error', (e) => gunzip.destroy(e));
  const text = input.pipe(gunzip).pipe(cap);
  gunzip.on('error', (e) => cap.destroy(e));
  const lines = createInterface({ input: text, crlfDelay: Infinity });
  let n = 0;
  let ended = false;
  try {
    for await (const line of lines) {
      n++;
      if (!line.trim()) continue;
      if (issues.length >= MAX_ISSUES) continue;
      if (ended) {
        issue(`line ${n}`, 'there is data after the end record');
        continue;
      }
      let value: unknown;
      try {
        value = JSON.parse(line);
      } catch {
        issue(`line ${n}`, 'is not valid JSON');
        continue;
      }
      const type = (value as { type?: unknown })?.type;
      if (n === 1 && type !== 'header') {
        issue('line 1', 'the first record must be the header (this is not a Poleward group backup)');
        break;
      }
      const section = backupSections.find((s) => s.type === type);
      const schema: z.ZodType = section ? section.schema : coreRecord;
      const parsed = schema.safeParse(value);
      if (!parsed.success) {
        for (const i of parsed.error.issues) issue(`line ${n} (${String(type)})${i.path.length ? ' ' + i.path.join('.') : ''}`, i.message);
        continue;
      }
      const record = parsed.data as { type: string };
      if (section) sections.get(section.type)!.push(record);
      else {
        (core[record.type as CoreRecord['type']] as unknown[]).push(record);
        if (record.type === 'end') ended = true;
      }
    }
  } catch (err) {
    if (err instanceof ApiError) throw err;
    const code = (err as { code?: string }).code;
    if (code === 'Z_DATA_ERROR' || code === 'Z_BUF_ERROR')
      throw invalid([{ path: 'file', message: 'is not a gzip file (a group backup is a .jsonl.gz archive)' }]);
    throw err;
  }
  if (n === 0) issue('file', 'is empty');
  if (!ended && issues.length === 0) issue(`line ${n}`, 'the archive ends without its end record (a truncated file?)');
  if (issues.length === 0) checkCounts(core, sections, issue);
  if (issues.length === 0) checkReferences(core, sections, issue);
  if (issues.length) throw invalid(issues);
  return { core, sections, lines: n };
}

function checkCounts(core: Core, sections: Map<string, { type: string }[]>, issue: (p: string, m: string) => void) {
  const counts = core.end[0]!.counts;
  const found: Record<string, number> = {};
  for (const [type, list] of Object.entries(core)) if (type !== 'header' && type !== 'end' && list.length) found[type] = list.length;
  for (const [type, list] of sections) if (list.length) found[type] = list.length;
  for (const type of new Set([...Object.keys(counts), ...Object.keys(found)])) {
    if ((counts[type] ?? 0) !== (found[type] ?? 0))
      issue(`end.counts.${type}`, `says ${counts[type] ?? 0} record(s) but the archive holds ${found[type] ?? 0}`);
  }
}

function checkReferences(core: Core, sections: Map<string, { type: string }[]>, issue: (p: string, m: string) => void) {
  const unique = (type: string, ids: string[]) => {
    const set = new Set<string>();
    for (const id of ids) {
      if (set.has(id)) issue(`${type} ${id}`, 'appears twice');
      set.add(id);
    }
    return set;
  };
  // Ids the sections bring (traces, fits, fitted resonances), checked unique with the core ones.
  const provided: Record<IdKind, string[]> = {
    models: core.model.map((m) => m.id),
    modelVersions: core.modelVersion.map((v) => v.id),
    runs: core.run.map((r) => r.id),
    resonances: core.resonance.map((r) => r.id),
    traces: [],
    fits: [],
  };
  for (const section of backupSections) {
    for (const r of sections.get(section.type) ?? []) {
      const p = section.provides?.(r);
      if (p) provided[p.kind].push(p.id);
    }
  }
  const known = Object.fromEntries(Object.entries(provided).map(([kind, ids]) => [kind, unique(kind.replace(/s$/, ''), ids)])) as Record<IdKind, Set<string>>;
  const need = (where: string, kind: IdKind, id: string) => {
    if (!known[kind].has(id)) issue(where, `refers to ${kind.replace(/s$/, '').replace(/V/, ' v')} ${id}, which is not in the archive`);
  };
  for (const v of core.modelVersion) {
    need(`modelVersion ${v.id} modelId`, 'models', v.modelId);
    // Its derived figures are computed again on restore, not taken from the file.
    if (!figuresOfStored(v.document, v.siteCount))
      issue(`modelVersion ${v.id} document`, 'is not a valid cavity model (its name, spacing, material, field or leads)');
  }
  for (const r of core.run) need(`run ${r.id} modelVersionId`, 'modelVersions', r.modelVersionId);
  for (const s of core.spectrum) need(`spectrum of run ${s.runId}`, 'runs', s.runId);
  for (const r of core.resonance) {
    need(`resonance ${r.id} runId`, 'runs', r.runId);
    need(`resonance ${r.id} modelId`, 'models', r.modelId);
    need(`resonance ${r.id} modelVersionId`, 'modelVersions', r.modelVersionId);
  }
  for (const m of core.mode) {
    need(`mode of resonance ${m.resonanceId}`, 'resonances', m.resonanceId);
    if (Buffer.byteLength(m.vector, 'base64') !== m.sites * 16)
      issue(`mode of resonance ${m.resonanceId} vector`, `must hold ${m.sites} complex values (${m.sites * 16} bytes)`);
  }
  for (const i of core.modeImage) {
    need(`modeImage of resonance ${i.resonanceId}`, 'resonances', i.resonanceId);
    if (!Buffer.from(i.png.slice(0, 12), 'base64').subarray(0, 8).equals(PNG_SIGNATURE))
      issue(`modeImage of resonance ${i.resonanceId} png`, 'is not a PNG image');
  }
  for (const section of backupSections) {
    for (const r of sections.get(section.type) ?? []) {
      const label = section.label(r);
      for (const ref of section.references?.(r) ?? []) if (ref.id !== null) need(`${label} ${ref.field}`, ref.kind, ref.id);
      for (const c of section.check?.(r) ?? []) issue(`${label} ${c.field}`, c.message);
    }
  }
}

/** Inserts rows a slice at a time (PostgreSQL takes at most 65,535 parameters per statement). */
async function insertAll<T>(rows: T[], size: number, insert: (slice: T[]) => Promise<unknown>) {
  for (let k = 0; k < rows.length; k += size) await insert(rows.slice(k, k + size));
}

/** Record counts a restore wrote, by section (the `restored` of the answer's RestoreSummary). */
export interface RestoredCounts {
  models: number;
  modelVersions: number;
  runs: number;
  resonances: number;
  modeImages: number;
  [section: string]: number;
}

/**
 * Writes a validated archive into an empty group, in one transaction: every row
 * gets a new id and the links follow; authors are re-attached by e-mail when they
 * are members of the target group. A run that was unfinished in the archive is
 * restored as cancelled (its worker belonged to the other server): launch it again.
 */
export async function restoreGroup(db: Db, groupId: string, actorId: string, b: ParsedBackup): Promise<RestoredCounts> {
  return db.transaction(async (tx) => {
    // Lock the group so two restores (or a restore and a new model) cannot interleave.
    await tx.execute(sql`select id from research_groups where id = ${groupId} for update`);
    const [{ n: modelCount }] = await tx.select({ n: count() }).from(cavityModels).where(eq(cavityModels.groupId, groupId));
    const [{ n: runCount }] = await tx.select({ n: count() }).from(runs).where(eq(runs.groupId, groupId));
    const [{ n: traceCount }] = await tx.select({ n: count() }).from(measuredTraces).where(eq(measuredTraces.groupId, groupId));
    if (modelCount > 0 || runCount > 0 || traceCount > 0) {
      throw new ApiError(
        409,
        'group_not_empty',
        `A backup is restored only into an empty group; this one already has ${modelCount} model(s), ${runCount} run(s) and ${traceCount} measured trace(s). Create a new group for it.`,
      );
    }
    const people = new Map<string, string>();
    for (const m of await tx
      .select({ id: users.id, email: users.email })
      .from(memberships)
      .innerJoin(users, eq(users.id, memberships.userId))
      .where(eq(memberships.groupId, groupId))) {
      people.set(m.email.toLowerCase(), m.id);
    }
    const person = (email: string | null) => (email ? (people.get(email.toLowerCase()) ?? null) : null);
    const remap = <T extends { id: string }>(list: T[]) => new Map(list.map((r) => [r.id, randomUUID()]));
    const ids: RestoredIds = {
      models: remap(b.core.model),
      modelVersions: remap(b.core.modelVersion),
      runs: remap(b.core.run),
      resonances: remap(b.core.resonance),
      traces: new Map(),
      fits: new Map(),
      people,
    };
    // New ids for what the sections bring, before any section is written (a fit links to a trace).
    for (const section of backupSections) {
      for (const r of b.sections.get(section.type) ?? []) {
        const p = section.provides?.(r);
        if (p) ids[p.kind].set(p.id, randomUUID());
      }
    }
    const date = (s: string | null) => (s ? new Date(s) : null);

    await insertAll(b.core.model, 500, (slice) =>
      tx.insert(cavityModels).values(
        slice.map((m) => ({
          id: ids.models.get(m.id)!,
          groupId,
          name: m.name,
          latestVersion: m.latestVersion,
          referenceKey: m.referenceKey,
          createdBy: person(m.createdBy),
          createdAt: date(m.createdAt)!,
          updatedAt: date(m.updatedAt)!,
        })),
      ),
    );
    await insertAll(b.core.modelVersion, 200, (slice) =>
      tx.insert(modelVersions).values(
        slice.map(({ type: _t, id, modelId, createdBy, createdAt, ...v }) => ({
          ...v,
          derived: figuresOfStored(v.document, v.siteCount),
          id: ids.modelVersions.get(id)!,
          modelId: ids.models.get(modelId)!,
          groupId,
          createdBy: person(createdBy),
          createdAt: date(createdAt)!,
        })),
      ),
    );
    await insertAll(b.core.run, 200, (slice) =>
      runStore.restore(
        tx,
        slice.map(({ type: _t, id, modelVersionId, createdBy, createdAt, startedAt, finishedAt, status, ...r }) => {
          const unfinished = status === 'queued' || status === 'running';
          return {
            ...r,
            id: ids.runs.get(id)!,
            groupId,
            modelVersionId: ids.modelVersions.get(modelVersionId)!,
            status: unfinished ? ('cancelled' as const) : status,
            error: unfinished ? 'This run was unfinished when the group was backed up; launch it again.' : r.error,
            createdBy: person(createdBy),
            createdAt: date(createdAt)!,
            startedAt: date(startedAt),
            finishedAt: unfinished ? new Date() : date(finishedAt),
            // The archive was checked record by record; these columns hold what the engine wrote.
            certificate: r.certificate as RunCertificate | null,
            estimate: r.estimate as RunEstimate | null,
          };
        }),
      ),
    );
    await insertAll(b.core.spectrum, 20, (slice) =>
      tx.insert(spectra).values(
        slice.map(({ type: _t, runId, createdAt, reflection, ...s }) => ({
          ...s,
          reflection: reflection ?? null,
          runId: ids.runs.get(runId)!,
          groupId,
          createdAt: date(createdAt)!,
        })),
      ),
    );
    await insertAll(b.core.resonance, 500, (slice) =>
      tx.insert(resonances).values(
        slice.map(({ type: _t, id, runId, modelId, modelVersionId, createdAt, ...r }) => ({
          ...r,
          id: ids.resonances.get(id)!,
          groupId,
          runId: ids.runs.get(runId)!,
          modelId: ids.models.get(modelId)!,
          modelVersionId: ids.modelVersions.get(modelVersionId)!,
          createdAt: date(createdAt)!,
        })),
      ),
    );
    await insertAll(b.core.mode, 50, (slice) =>
      tx
        .insert(resonanceModes)
        .values(slice.map((m) => ({ resonanceId: ids.resonances.get(m.resonanceId)!, sites: m.sites, vector: Buffer.from(m.vector, 'base64') }))),
    );
    await insertAll(b.core.modeImage, 50, (slice) =>
      tx.insert(modeImages).values(
        slice.map((i) => ({
          resonanceId: ids.resonances.get(i.resonanceId)!,
          size: i.size,
          width: i.width,
          height: i.height,
          etag: i.etag,
          png: Buffer.from(i.png, 'base64'),
        })),
      ),
    );
    const summary: RestoredCounts = {
      models: b.core.model.length,
      modelVersions: b.core.modelVersion.length,
      runs: b.core.run.length,
      resonances: b.core.resonance.length,
      modeImages: b.core.modeImage.length,
    };
    for (const section of backupSections) {
      const records = b.sections.get(section.type) ?? [];
      await section.restore(tx as Queryable, groupId, records, ids);
      summary[section.type] = records.length;
    }
    const header = b.core.header[0]!;
    await writeAudit(tx, {
      groupId,
      actorId,
      action: 'group.restored',
      subject: `backup of ${header.group.name} (${header.createdAt.slice(0, 10)})`,
      details: { ...summary, from: header.group.slug, backedUpAt: header.createdAt },
    });
    return summary;
  });
}
