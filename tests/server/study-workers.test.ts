// Two worker processes share one study; one is killed (SIGKILL) in the middle of a step.
// Its step comes back when its job expires and the other process computes it: every step
// ends completed, each exactly once (one row per step, one stored result per distinct
// step), and both processes took steps.
import { spawn, type ChildProcess } from 'node:child_process';
import { eq } from 'drizzle-orm';
import type PgBoss from 'pg-boss';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { studies, studySteps, studyStepResults } from '../../server/db/schema/studies.js';
import { startBoss } from '../../server/jobs/boss.js';
import { studyQueue } from '../../server/studies/study-queue.js';
import { createLab, type Lab } from './lab-fixture.js';
import { signInAs, type SignedIn } from './sign-in-as.js';
import { startTestApp, testDatabaseUrl, type TestApp } from './test-app.js';
import { dotWideWindow, smallDot } from './fixtures/small-dot.js';
import { waitFor } from './wait-for.js';

function startWorkerProcess(): Promise<ChildProcess> {
  const child = spawn(process.execPath, ['--import', 'tsx', 'tests/server/fixtures/study-worker-process.ts'], {
    env: { ...process.env, DATABASE_URL: testDatabaseUrl() },
    stdio: ['ignore', 'pipe', 'inherit'],
  });
  return new Promise((resolve, reject) => {
    child.stdout!.on('data', (d: Buffer) => {
      if (d.toString().includes('ready')) resolve(child);
    });
    child.once('exit', (code) => reject(new Error(`worker process exited early (${code})`)));
  });
}

describe('a study shared by two worker processes', () => {
  let app: TestApp;
  let boss: PgBoss;
  let lab: Lab;
  let designer: SignedIn;
  const children: ChildProcess[] = [];

  beforeAll(async () => {
    boss = await startBoss({ databaseUrl: testDatabaseUrl(), maintenanceIntervalSeconds: 1 });
    // A short expiry: a dead worker's step comes back after 20 s (production: 15 minutes).
    app = await startTestApp({ studyQueue: studyQueue(boss, 20) });
    lab = await createLab(app.handle.db, ['designer']);
    designer = await signInAs(app, lab.as('designer').email);
  });

  afterAll(async () => {
    for (const c of children) if (c.exitCode === null) c.kill('SIGKILL');
    await app?.close();
    await boss?.stop({ graceful: false, wait: false }).catch(() => {});
  });

  it('loses no step and duplicates none when one is killed mid-study', { timeout: 360_000 }, async () => {
    const m = await designer.post(`/api/groups/${lab.groupId}/models`, { document: smallDot('shared study') });
    expect(m.status).toBe(201);
    const created = await designer.post(`/api/groups/${lab.groupId}/studies`, {
      kind: 'sweep',
      modelId: m.body.id,
      parameters: [{ path: 'potential.0.amplitude', values: { from: 0, to: 1.4, count: 8 } }],
      window: dotWideWindow,
    });
    expect(created.status).toBe(201);
    const id = created.body.id as string;
    const [a, b] = [await startWorkerProcess(), await startWorkerProcess()];
    children.push(a, b);
    // Kill a while it computes a step.
    const victim = await waitFor(
      'worker A to take a step',
      async () => {
        const rows = await app.handle.db.select().from(studySteps).where(eq(studySteps.studyId, id));
        return rows.find((r) => r.status === 'running' && r.worker?.endsWith(`:${a.pid}`));
      },
      120,
    );
    a.kill('SIGKILL');
    const study = await waitFor(
      'the study to end',
      async () => {
        const [s] = await app.handle.db.select().from(studies).where(eq(studies.id, id));
        return s?.finishedAt && s;
      },
      240,
    );
    expect(study.status).toBe('completed');
    expect(study.error).toBeNull();
    const steps = await app.handle.db.select().from(studySteps).where(eq(studySteps.studyId, id));
    expect(steps.length).toBe(8);
    expect(new Set(steps.map((s) => s.index)).size).toBe(8);
    steps.forEach((s) => expect(s.status).toBe('completed'));
    // The killed step was taken again (attempt 2) and finished by the other process.
    const redone = steps.find((s) => s.index === victim.index)!;
    expect(redone.attempt).toBeGreaterThanOrEqual(2);
    expect(redone.worker?.endsWith(`:${b.pid}`)).toBe(true);
    // One stored search per step (the eight models differ), none twice.
    const keys = new Set(steps.map((s) => s.resultKey));
    expect(keys.size).toBe(8);
    for (const key of keys) {
      const rows = await app.handle.db.select({ key: studyStepResults.key }).from(studyStepResults).where(eq(studyStepResults.key, key!));
      expect(rows.length).toBe(1);
    }
    // Every pole of every step lies on exactly one trajectory of the assembled outcome.
    const outcome = study.outcome as {
      steps: { poles: unknown[]; transmission: number[] | null }[];
      lines: { trajectories: { points: unknown[] }[] }[];
      transmission: { energies: number[] };
    };
    // Every step's row of the transmission map is there too (the killed step's included).
    outcome.steps.forEach((s) => expect(s.transmission?.length).toBe(outcome.transmission.energies.length));
    const poles = outcome.steps.reduce((n, s) => n + s.poles.length, 0);
    const points = outcome.lines[0].trajectories.reduce((n, t) => n + t.points.length, 0);
    expect(points).toBe(poles);
    expect(poles).toBeGreaterThan(0);
    // The surviving process took steps (the killed one's included).
    expect(steps.filter((s) => s.worker?.endsWith(`:${b.pid}`)).length).toBeGreaterThan(0);
  });
});
