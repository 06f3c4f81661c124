// The run store is the one owner of the runs table (issue 8, part 3): the source holds no
// other write to it, and its transition table refuses every change it does not list,
// writing nothing.
import { readdirSync, readFileSync, statSync } from 'node:fs';
import { join, relative } from 'node:path';
import { eq } from 'drizzle-orm';
import pg from 'pg';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { projectRoot } from '../../server/config.js';
import { connectDb, type DbHandle } from '../../server/db/client.js';
import { runs, type RunStatus } from '../../server/db/schema/runs.js';
import { inlineCompute } from '../../server/compute/compute-pool.js';
import { IllegalTransition } from '../../server/jobs/job-lifecycle.js';
import { ModelService } from '../../server/models/model-service.js';
import { findVersion } from '../../server/models/model-repository.js';
import { RUN_STATUSES, RUN_TRANSITIONS, runStore } from '../../server/runs/run-store.js';
import { createLab, type Lab } from './lab-fixture.js';
import { testDatabaseUrl } from './test-app.js';
import { smallRectangle } from './fixtures/small-cavity.js';

function sourceFiles(dir: string): string[] {
  return readdirSync(dir).flatMap((name) => {
    const path = join(dir, name);
    if (statSync(path).isDirectory()) return sourceFiles(path);
    return /\.(ts|mts|mjs|js)$/.test(name) ? [path] : [];
  });
}

describe('one owner of the runs table', () => {
  // drizzle's builders and raw SQL, with any spacing and case.
  const writes = [/\b(update|insert|delete)\s*\(\s*runs\s*\)/, /\bupdate\s+runs\b/i, /\binsert\s+into\s+runs\b/i, /\bdelete\s+from\s+runs\b/i];
  const events = /pg_notify\s*\(\s*'run_events'/;
  const server = join(projectRoot, 'server');
  const files = sourceFiles(server);

  it('finds the files it scans', () => {
    expect(files.length).toBeGreaterThan(50);
    expect(files.some((f) => f.endsWith(join('runs', 'run-store.ts')))).toBe(true);
  });

  it('no file under server/ but the run store writes runs rows', () => {
    const offenders = files
      .filter((f) => !f.endsWith(join('runs', 'run-store.ts')))
      .flatMap((f) =>
        readFileSync(f, 'utf8')
          .split('\n')
          .flatMap((line, k) => (writes.some((w) => w.test(line)) ? [`${relative(projectRoot, f)}:${k + 1}: ${line.trim()}`] : [])),
      );
    expect(offenders).toEqual([]);
  });

  it('no file under server/ but the run store and the fits sends run events', () => {
    const senders = files.filter((f) => events.test(readFileSync(f, 'utf8'))).map((f) => relative(projectRoot, f));
    expect(senders.sort()).toEqual(['server/fits/fit-notify.ts', 'server/runs/run-store.ts']);
  });
});

describe('the run transition table', () => {
  let handle: DbHandle;
  let lab: Lab;
  let versionId: string;

  beforeAll(async () => {
    handle = connectDb(testDatabaseUrl(), 2);
    lab = await createLab(handle.db, ['designer']);
    const model = await new ModelService(handle.db, inlineCompute).create(lab.groupId, lab.as('designer').id, smallRectangle('Transitions'));
    versionId = (await findVersion(handle.db, lab.groupId, model.id))!.id;
  });
  afterAll(async () => handle?.close());

  /** A run put straight into `status` (the test writes the row itself to reach every state). */
  async function runIn(status: RunStatus) {
    const id = await runStore.create(handle.db, {
      groupId: lab.groupId,
      modelVersionId: versionId,
      kind: 'pole-search',
      window: { emin: 3, emax: 6, gammaMax: 1 },
      note: '',
      estimate: null,
      createdBy: lab.as('designer').id,
    });
    await handle.db
      .update(runs)
      .set({ status, attempt: status === 'queued' ? 0 : 1 })
      .where(eq(runs.id, id));
    const [row] = await handle.db.select().from(runs).where(eq(runs.id, id));
    return row!;
  }

  async function rowOf(id: string) {
    const [row] = await handle.db.select().from(runs).where(eq(runs.id, id));
    return row!;
  }

  it('lists the finished states as final and every other state as able to move', () => {
    expect(RUN_STATUSES.sort()).toEqual(['cancelled', 'completed', 'failed', 'queued', 'running']);
    for (const s of ['completed', 'failed', 'cancelled'] as const) expect(RUN_TRANSITIONS[s]).toEqual([]);
    expect(RUN_TRANSITIONS.queued).not.toContain('completed'); // a run completes only through an attempt
  });

  const pairs = RUN_STATUSES.flatMap((from) => RUN_STATUSES.map((to) => [from, to] as const));

  it.each(pairs.filter(([from, to]) => !RUN_TRANSITIONS[from].includes(to)))('refuses %s → %s and changes nothing', async (from, to) => {
    const before = await runIn(from);
    const err = await runStore.transition(handle.db, before.id, to).catch((e: unknown) => e);
    expect(err).toBeInstanceOf(IllegalTransition);
    expect((err as Error).message).toBe(`run ${before.id} is ${from}; it cannot become ${to}`);
    expect(await rowOf(before.id)).toEqual(before);
  });

  it.each(pairs.filter(([from, to]) => RUN_TRANSITIONS[from].includes(to)))('allows %s → %s and sends the run event', async (from, to) => {
    const before = await runIn(from);
    const listener = new pg.Client({ connectionString: testDatabaseUrl() });
    await listener.connect();
    const heard: string[] = [];
    listener.on('notification', (n) => heard.push(n.payload ?? ''));
    await listener.query('LISTEN run_events');
    try {
      const after = await runStore.transition(handle.db, before.id, to);
      expect(after?.status).toBe(to);
      expect((await rowOf(before.id)).status).toBe(to);
      for (let k = 0; k < 40 && !heard.includes(before.id); k++) await new Promise((r) => setTimeout(r, 50));
      expect(heard).toContain(before.id);
    } finally {
      await listener.end();
    }
  });

  it('a stale attempt changes nothing, even where the change itself is allowed', async () => {
    const before = await runIn('running');
    expect(await runStore.fail(handle.db, before.id, 'late', before.attempt - 1)).toBe(false);
    expect(await runStore.complete(handle.db, before.id, before.attempt + 1, { resonanceCount: 0 })).toBe(false);
    expect(await runStore.beat(handle.db, before.id, before.attempt + 1, { stage: 'x', fraction: 0.5 })).toBeNull();
    expect(await rowOf(before.id)).toEqual(before);
    // Its own attempt may.
    expect(await runStore.fail(handle.db, before.id, 'its own', before.attempt)).toBe(true);
    expect(await rowOf(before.id)).toMatchObject({ status: 'failed', error: 'its own' });
  });

  it('a late attempt finds a finished run superseded, not an error', async () => {
    const before = await runIn('completed');
    expect(await runStore.fail(handle.db, before.id, 'late', before.attempt)).toBe(false);
    expect(await runStore.startAttempt(handle.db, before.id)).toBeNull();
    expect(await rowOf(before.id)).toEqual(before);
  });

  it('a cancellation of a finished run is refused; of a running one is only flagged', async () => {
    const done = await runIn('failed');
    await expect(runStore.requestCancel(handle.db, done.id)).rejects.toBeInstanceOf(IllegalTransition);
    expect(await rowOf(done.id)).toEqual(done);
    const live = await runIn('running');
    expect(await runStore.requestCancel(handle.db, live.id)).toBe('requested');
    expect(await rowOf(live.id)).toMatchObject({ status: 'running', cancelRequested: true });
    const waiting = await runIn('queued');
    expect(await runStore.requestCancel(handle.db, waiting.id)).toBe('cancelled');
    expect(await rowOf(waiting.id)).toMatchObject({ status: 'cancelled', cancelRequested: true });
  });

  it('restores only finished runs', async () => {
    const row = { groupId: lab.groupId, modelVersionId: versionId, kind: 'pole-search' as const, window: {}, status: 'running' as const };
    await expect(runStore.restore(handle.db, [row])).rejects.toThrow(/must be finished/);
  });
});
