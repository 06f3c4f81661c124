// A map computed on demand whose worker stalls (issue 12, lost-worker handling as runs and
// fits have): the supervisor hands it to another worker long before the pg-boss expiry,
// the pg-boss job and the map's attempt agree at every step, and the stalled attempt's
// late answer changes nothing. Real pg-boss on the test database; the workers run in this
// process with a gate on their computation and their heartbeat paused (a stalled process),
// and the supervisor is called by hand, so the interleaving is the same on every run.
import { eq, sql } from 'drizzle-orm';
import type PgBoss from 'pg-boss';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { inlineCompute } from '../../server/compute/compute-pool.js';
import { connectDb, type DbHandle } from '../../server/db/client.js';
import { modeMaps } from '../../server/db/schema/mode-maps.js';
import { startBoss } from '../../server/jobs/boss.js';
import { superviseModeMaps } from '../../server/jobs/mode-map-supervisor.js';
import { MODE_MAP_QUEUE } from '../../server/jobs/queues.js';
import { ModelService } from '../../server/models/model-service.js';
import { modeMapQueue } from '../../server/modemaps/mode-map-queue.js';
import { ModeMapService } from '../../server/modemaps/mode-map-service.js';
import { runModeMapTask, type ModeMapTask } from '../../server/modemaps/mode-map-task.js';
import { startModeMapWorker, type ModeMapOutcome } from '../../server/modemaps/mode-map-worker.js';
import { createLab, type Lab } from './lab-fixture.js';
import { testDatabaseUrl } from './test-app.js';
import { smallRectangle } from './fixtures/small-cavity.js';
import { waitFor } from './wait-for.js';

let handle: DbHandle;
let boss: PgBoss;
let lab: Lab;
let maps: ModeMapService;
let modelId: string;
const queue = MODE_MAP_QUEUE.name;
const stale = 2;

beforeAll(async () => {
  handle = connectDb(testDatabaseUrl(), 6);
  boss = await startBoss({ databaseUrl: testDatabaseUrl() });
  lab = await createLab(handle.db, ['designer']);
  modelId = (await new ModelService(handle.db, inlineCompute).create(lab.groupId, lab.as('designer').id, smallRectangle('Map handover'))).id;
  maps = new ModeMapService(handle.db, modeMapQueue(boss));
});
afterAll(async () => {
  await boss?.stop({ graceful: false, wait: true });
  await handle?.close();
});

/** A map worker whose computation waits for `release()` and whose heartbeat can be paused. */
function gatedWorker() {
  let open!: () => void;
  const gate = new Promise<void>((r) => (open = r));
  const state = { paused: false, started: false, computed: 0 };
  const outcomes: ModeMapOutcome[] = [];
  const loop = startModeMapWorker({
    db: handle.db,
    boss,
    pollSeconds: 0.2,
    log: () => {},
    heartbeatPaused: () => state.paused,
    onOutcome: (_id, outcome) => outcomes.push(outcome),
    // A real answer, computed once the gate opens; the abort signal is ignored, as a stalled thread would.
    compute: async (task: ModeMapTask) => {
      state.started = true;
      await gate;
      state.computed++;
      return runModeMapTask(task);
    },
  });
  return { state, outcomes, loop, release: () => open() };
}

async function mapRow(id: string) {
  const [row] = await handle.db.select().from(modeMaps).where(eq(modeMaps.id, id));
  return row!;
}

async function jobState(jobId: string) {
  return (await boss.getJobById(queue, jobId, { includeArchive: true }))?.state ?? 'missing';
}

describe('a mode map handed between stalled workers', () => {
  it('comes back through the supervisor, and a late finisher writes nothing', async () => {
    // A scattering state at 4 meV: channel 1 of the source is open (it opens near 2.74 meV).
    const { view } = await maps.create(lab.groupId, lab.as('designer').id, { modelId, energy: 4, lead: 0, channel: 1, husimi: null });
    const jobId = (await mapRow(view.id)).jobId!;
    expect(jobId).toMatch(/^[0-9a-f-]{36}$/);

    // Worker A takes the map, beats its heartbeat, then stalls.
    const a = gatedWorker();
    await waitFor('A to start computing', async () => a.state.started, 30);
    const claimed = await mapRow(view.id);
    expect(claimed).toMatchObject({ status: 'running', attempt: 1, jobId });
    await waitFor('a heartbeat after the claim', async () => (await mapRow(view.id)).heartbeatAt! > claimed.heartbeatAt!, 10);
    a.state.paused = true;
    await a.loop.stop(); // A finishes its current attempt but fetches nothing more
    expect(await jobState(jobId)).toBe('active');

    // A map that still beats, or is silent for less than the stale time, is left alone.
    expect(await superviseModeMaps({ db: handle.db, boss, staleAfterSeconds: 60, groupId: lab.groupId })).toEqual({ handedOn: 0, failed: 0 });
    expect((await mapRow(view.id)).status).toBe('running');

    // The supervisor notices A's silence (aged here instead of waited for) and hands the map on.
    await handle.db.execute(sql`update mode_maps set heartbeat_at = now() - interval '1 minute' where id = ${view.id}`);
    expect(await superviseModeMaps({ db: handle.db, boss, staleAfterSeconds: stale, groupId: lab.groupId })).toEqual({ handedOn: 1, failed: 0 });
    expect(await mapRow(view.id)).toMatchObject({ status: 'queued', attempt: 1, progressStage: 'waiting for another worker' });
    expect(await jobState(jobId)).toBe('retry');

    // Worker B takes the same job (pg-boss's retry) and computes.
    const b = gatedWorker();
    try {
      await waitFor('B to start computing', async () => b.state.started, 30);
      expect(await mapRow(view.id)).toMatchObject({ status: 'running', attempt: 2, jobId });
      expect(await jobState(jobId)).toBe('active');

      // A wakes up and finishes: superseded, nothing written, B's job untouched.
      a.release();
      await waitFor('A to end', async () => a.outcomes.length > 0, 60);
      expect(a.outcomes).toEqual(['superseded']);
      expect(a.state.computed).toBe(1);
      expect(await mapRow(view.id)).toMatchObject({ status: 'running', attempt: 2, result: null });
      expect(await jobState(jobId)).toBe('active');

      // B finishes: the map completes once, and its job with it.
      b.release();
      await waitFor('B to end', async () => b.outcomes.length > 0, 60);
      expect(b.outcomes).toEqual(['completed']);
      const done = await mapRow(view.id);
      expect(done).toMatchObject({ status: 'completed', attempt: 2, error: null });
      expect(done.result).not.toBeNull();
      expect(await jobState(jobId)).toBe('completed');
    } finally {
      b.release();
      await b.loop.stop();
    }
  });

  it('a lost map whose job had already ended is sent again as a new job', async () => {
    const { view } = await maps.create(lab.groupId, lab.as('designer').id, { modelId, energy: 4.5, lead: 0, channel: 1, husimi: null });
    const jobId = (await mapRow(view.id)).jobId!;
    // As a worker that died after claiming: running, attempt 1, silent; its job gone by expiry.
    await handle.db.execute(sql`update mode_maps set status = 'running', attempt = 1, heartbeat_at = now() - interval '1 minute' where id = ${view.id}`);
    await boss.cancel(queue, jobId);
    expect(await superviseModeMaps({ db: handle.db, boss, staleAfterSeconds: stale, groupId: lab.groupId })).toEqual({ handedOn: 1, failed: 0 });
    const row = await mapRow(view.id);
    expect(row.status).toBe('queued');
    expect(row.jobId).not.toBe(jobId);
    expect(await jobState(row.jobId!)).toBe('created');
  });
});
