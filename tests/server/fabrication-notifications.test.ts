// E-mail notifications end to end: a state change writes notifications in its transaction,
// the `notification` queue (real pg-boss) sends them to the local SMTP stand-in, and a member
// who turned a kind off gets none. A mail provider that keeps failing leaves a failed
// notification that the group's admins see.
import type PgBoss from 'pg-boss';
import { and, eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { notifications } from '../../server/db/schema/fabrication.js';
import { outboxMessages } from '../../server/db/schema/outbox.js';
import { startNotificationWorker } from '../../server/fabrication/notification-job.js';
import { notifyRunEnded } from '../../server/fabrication/run-notification.js';
import { runs } from '../../server/db/schema/runs.js';
import { notificationQueue } from '../../server/fabrication/notification-queue.js';
import { startBoss } from '../../server/jobs/boss.js';
import { createMailer, type Mailer } from '../../server/mail/mailer.js';
import { insertResonances } from './fabrication-fixture.js';
import { createLab, type Lab } from './lab-fixture.js';
import { signInAs, type SignedIn } from './sign-in-as.js';
import { startTestApp, testDatabaseUrl, type TestApp } from './test-app.js';
import { waitFor } from './wait-for.js';

let app: TestApp;
let boss: PgBoss;
let mailer: Mailer;
let worker: { stop: () => Promise<void> };
let lab: Lab;
let ids: string[];
let fixture: Awaited<ReturnType<typeof insertResonances>>;
const as: Record<string, SignedIn> = {};
const fastRetries = { name: 'notification', retryLimit: 1, retryDelaySeconds: 1, expireInSeconds: 60 };

beforeAll(async () => {
  boss = await startBoss({ databaseUrl: testDatabaseUrl() });
  app = await startTestApp({ notifications: notificationQueue(boss, fastRetries) });
  mailer = createMailer(`smtp://127.0.0.1:${app.standIn.port}`, app.config.mailFrom);
  worker = await startNotificationWorker({ db: app.handle.db, boss, mailer, pollingIntervalSeconds: 0.5 });
  // Two reviewers: one keeps candidate e-mails, one turns them off.
  lab = await createLab(app.handle.db, ['admin', 'designer', 'reviewer', 'reviewer', 'viewer']);
  ({ ids } = fixture = await insertResonances(app.handle.db, lab, [
    { energy: 4.2, width: 0.012 },
    { energy: 5.1, width: 0.03 },
  ]));
  as.admin = await signInAs(app, lab.as('admin').email);
  as.designer = await signInAs(app, lab.as('designer').email);
  as.reviewer = await signInAs(app, lab.members[2]!.email);
  as.quietReviewer = await signInAs(app, lab.members[3]!.email);
  as.viewer = await signInAs(app, lab.as('viewer').email);
});
afterAll(async () => {
  await worker?.stop();
  await boss?.stop({ graceful: false, wait: true }).catch(() => {});
  mailer?.close();
  await app?.close();
});

const url = (id: string, tail = 'fabrication') => `/api/groups/${lab.groupId}/resonances/${id}/${tail}`;

async function mailTo(address: string) {
  return app.handle.db.select().from(outboxMessages).where(eq(outboxMessages.toAddress, address));
}

async function settled(): Promise<void> {
  await waitFor(
    'the queued notifications to be sent',
    async () => {
      const queued = await app.handle.db
        .select()
        .from(notifications)
        .where(and(eq(notifications.groupId, lab.groupId), eq(notifications.status, 'queued')));
      return queued.length === 0;
    },
    20,
  );
}

describe('e-mail notifications', () => {
  it('each user turns a kind off on their account', async () => {
    const before = await as.quietReviewer!.get('/api/account/notifications');
    expect(before.status).toBe(200);
    expect(before.body.kinds.every((k: { enabled: boolean }) => k.enabled)).toBe(true);
    const put = await as
      .quietReviewer!.agent.put('/api/account/notifications')
      .set('X-CSRF-Token', as.quietReviewer!.csrf)
      .send({ enabled: { candidate_proposed: false } });
    expect(put.status, JSON.stringify(put.body)).toBe(200);
    const kinds = Object.fromEntries(put.body.kinds.map((k: { kind: string; enabled: boolean }) => [k.kind, k.enabled]));
    expect(kinds).toMatchObject({ candidate_proposed: false, candidate_decided: true, fabrication_progress: true });
    const bad = await as
      .quietReviewer!.agent.put('/api/account/notifications')
      .set('X-CSRF-Token', as.quietReviewer!.csrf)
      .send({ enabled: { candidate_proposed: 'no' } });
    expect(bad.status).toBe(400);
  });

  it('reviewers hear of a proposal, except the one who turned it off; the link opens the review queue', async () => {
    await as.designer!.post(url(ids[0]!), { action: 'propose', reason: 'high Q, isolated', tolerances: { energyMeV: 0.05 } }).expect(200);
    await settled();
    const reviewerMail = await mailTo(lab.members[2]!.email);
    expect(reviewerMail).toHaveLength(1);
    expect(reviewerMail[0]!.subject).toContain('Candidate for fabrication');
    expect(reviewerMail[0]!.textBody).toContain('high Q, isolated');
    const slug = (await app.handle.pool.query('select slug from research_groups where id = $1', [lab.groupId])).rows[0].slug;
    expect(reviewerMail[0]!.textBody).toContain(`${app.config.publicUrl}/g/${slug}/review`);
    // Admins review too; the proposer, the viewer and the reviewer who turned it off get nothing.
    expect(await mailTo(lab.as('admin').email)).toHaveLength(1);
    expect(await mailTo(lab.members[3]!.email)).toHaveLength(0);
    expect(await mailTo(lab.as('designer').email)).toHaveLength(0);
    expect(await mailTo(lab.as('viewer').email)).toHaveLength(0);
  });

  it('the proposer hears of the decision with a link to the resonance', async () => {
    await as.reviewer!.post(url(ids[0]!), { action: 'approve', reason: 'fits the process window' }).expect(200);
    await settled();
    const mail = await mailTo(lab.as('designer').email);
    expect(mail).toHaveLength(1);
    expect(mail[0]!.subject).toContain('approved');
    expect(mail[0]!.textBody).toContain('fits the process window');
    expect(mail[0]!.textBody).toMatch(new RegExp(`/catalogue/resonances/${ids[0]}`));
  });

  it('the group hears of a resonance sent to fabrication, except the sender', async () => {
    await as.designer!.post(url(ids[0]!), { action: 'send', batch: 'wafer HL-9' }).expect(200);
    await settled();
    for (const m of lab.members) {
      const got = (await mailTo(m.email)).filter((x) => x.subject.includes('Sent to fabrication (wafer HL-9)'));
      expect(got, m.email).toHaveLength(m.role === 'designer' ? 0 : 1);
    }
  });

  it('a mentioned member gets an e-mail; one who turned mentions off does not', async () => {
    await as
      .viewer!.agent.put('/api/account/notifications')
      .set('X-CSRF-Token', as.viewer!.csrf)
      .send({ enabled: { mentioned: false } })
      .expect(200);
    await as.reviewer!.post(url(ids[1]!, 'comments'), { body: 'Worth a look?', mentions: [lab.as('designer').id, lab.as('viewer').id] }).expect(201);
    await settled();
    const designerMail = (await mailTo(lab.as('designer').email)).filter((m) => m.subject.includes('mentioned you'));
    expect(designerMail).toHaveLength(1);
    expect(designerMail[0]!.textBody).toContain('Worth a look?');
    expect((await mailTo(lab.as('viewer').email)).filter((m) => m.subject.includes('mentioned you'))).toHaveLength(0);
  });

  it("a long run's owner hears when it finishes or fails; a short run sends nothing", async () => {
    const db = app.handle.db;
    const owner = lab.as('designer');
    const queue = notificationQueue(boss, fastRetries);
    const now = Date.now();
    const [long] = await db
      .insert(runs)
      .values({
        groupId: lab.groupId,
        modelVersionId: fixture.modelVersionId,
        kind: 'pole-search',
        status: 'failed',
        error: 'the contour met a pole',
        window: { emin: 1, emax: 2 },
        createdBy: owner.id,
        createdAt: new Date(now - 300_000),
        finishedAt: new Date(now),
      })
      .returning();
    const [short] = await db
      .insert(runs)
      .values({
        groupId: lab.groupId,
        modelVersionId: fixture.modelVersionId,
        kind: 'transmission',
        status: 'completed',
        window: { emin: 1, emax: 2, points: 10 },
        createdBy: owner.id,
        createdAt: new Date(now - 5_000),
        finishedAt: new Date(now),
      })
      .returning();
    expect(await notifyRunEnded(db, queue, app.config.publicUrl, short!.id)).toEqual([]);
    expect(await notifyRunEnded(db, queue, app.config.publicUrl, long!.id)).toHaveLength(1);
    await settled();
    const mail = (await mailTo(owner.email)).filter((m) => m.subject.includes('pole search'));
    expect(mail).toHaveLength(1);
    expect(mail[0]!.subject).toContain('failed');
    expect(mail[0]!.textBody).toContain('the contour met a pole');
    expect(mail[0]!.textBody).toContain('after 5 min');
    expect(mail[0]!.textBody).toMatch(new RegExp(`/runs/${long!.id}`));
  });

  it('a send that keeps failing is retried, then listed to the admins as failed', async () => {
    const failing: Mailer = { send: async () => Promise.reject(new Error('provider refused: 554 relay denied')), close: () => {} };
    await worker.stop();
    worker = await startNotificationWorker({ db: app.handle.db, boss, mailer: failing, pollingIntervalSeconds: 0.5 });
    try {
      await as.designer!.post(url(ids[1]!), { action: 'propose', reason: 'second one' }).expect(200);
      await waitFor(
        'a notification marked failed',
        async () => {
          const rows = await app.handle.db
            .select()
            .from(notifications)
            .where(and(eq(notifications.groupId, lab.groupId), eq(notifications.status, 'failed')));
          return rows.length > 0;
        },
        30,
      );
      const list = await as.admin!.get(`/api/groups/${lab.groupId}/notifications/failed`);
      expect(list.status).toBe(200);
      expect(list.body.items.length).toBeGreaterThan(0);
      expect(list.body.items[0].error).toContain('554 relay denied');
      expect(list.body.items[0].attempts).toBe(2); // the first try and one retry (retryLimit 1)
      expect((await as.designer!.get(`/api/groups/${lab.groupId}/notifications/failed`)).status).toBe(403);
    } finally {
      await worker.stop();
      worker = await startNotificationWorker({ db: app.handle.db, boss, mailer, pollingIntervalSeconds: 0.5 });
    }
  });

  it('an admin sends a failed notification again once the mail works; it arrives once and leaves the list', async () => {
    const failedUrl = `/api/groups/${lab.groupId}/notifications/failed`;
    const [failed] = (await as.admin!.get(failedUrl).expect(200)).body.items as { id: string; to: string; subject: string }[];
    expect(failed, 'the previous test leaves a failed notification').toBeDefined();
    const retryUrl = `/api/groups/${lab.groupId}/notifications/${failed!.id}/retry`;
    expect((await as.designer!.post(retryUrl, {})).status).toBe(403);
    const before = (await mailTo(failed!.to)).filter((m) => m.subject === failed!.subject).length;

    const res = await as.admin!.post(retryUrl, {});
    expect(res.status, JSON.stringify(res.body)).toBe(200);
    expect(res.body).toEqual({ id: failed!.id, status: 'queued' });
    await settled();
    const [row] = await app.handle.db.select().from(notifications).where(eq(notifications.id, failed!.id));
    expect(row!.status).toBe('sent');
    expect((await mailTo(failed!.to)).filter((m) => m.subject === failed!.subject)).toHaveLength(before + 1);
    expect(((await as.admin!.get(failedUrl).expect(200)).body.items as { id: string }[]).map((i) => i.id)).not.toContain(failed!.id);

    const again = await as.admin!.post(retryUrl, {});
    expect(again.status).toBe(409);
    expect(again.body.code).toBe('not_failed');
    expect((await as.admin!.post(`/api/groups/${lab.groupId}/notifications/00000000-0000-4000-8000-000000000000/retry`, {})).status).toBe(404);
    const malformed = await as.admin!.post(`/api/groups/${lab.groupId}/notifications/not-an-id/retry`, {});
    expect(malformed.status).toBe(400);
    expect(JSON.stringify(malformed.body)).toContain('must be the id of a notification');
  });
});
