// The fabrication state machine through the API: who may take which step, illegal steps
// answer 409 saying what is allowed, and a refused request changes nothing (row, audit log).
import { and, eq, sql } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { auditLog } from '../../server/db/schema/audit.js';
import { resonanceComments, resonanceFabrication } from '../../server/db/schema/fabrication.js';
import { resonances } from '../../server/db/schema/catalogue.js';
import { measuredTraces, peakFits } from '../../server/db/schema/fits.js';
import { insertResonances } from './fabrication-fixture.js';
import { createLab, type Lab } from './lab-fixture.js';
import { signInAs, type SignedIn } from './sign-in-as.js';
import { startTestApp, type TestApp } from './test-app.js';

let app: TestApp;
let lab: Lab;
let ids: string[];
const as: Record<string, SignedIn> = {};

beforeAll(async () => {
  app = await startTestApp();
  lab = await createLab(app.handle.db, ['admin', 'designer', 'reviewer', 'viewer']);
  ({ ids } = await insertResonances(app.handle.db, lab, [
    { energy: 4.2, width: 0.012 },
    { energy: 5.1, width: 0.03 },
    { energy: 6.3, width: 0.2 },
  ]));
  for (const role of ['admin', 'designer', 'reviewer', 'viewer'] as const) as[role] = await signInAs(app, lab.as(role).email);
});
afterAll(() => app.close());

const url = (id: string, tail = 'fabrication') => `/api/groups/${lab.groupId}/resonances/${id}/${tail}`;

/** The row and the number of audit entries of a resonance: what a refused request must leave alone. */
async function snapshot(id: string) {
  const db = app.handle.db;
  const [row] = await db.select().from(resonanceFabrication).where(eq(resonanceFabrication.resonanceId, id));
  const [{ n }] = await db
    .select({ n: sql<number>`count(*)::int` })
    .from(auditLog)
    .where(and(eq(auditLog.groupId, lab.groupId), sql`${auditLog.details}->>'resonanceId' = ${id}`));
  const comments = await db.select().from(resonanceComments).where(eq(resonanceComments.resonanceId, id));
  const [res] = await db.select({ tags: resonances.tags }).from(resonances).where(eq(resonances.id, id));
  return { row: row ?? null, audits: n, comments: comments.length, tags: res!.tags };
}

describe('fabrication states', () => {
  it('runs the whole way: propose, review, approve, send, measure, each step audited', async () => {
    const id = ids[0]!;
    const fresh = await as.designer!.get(url(id));
    expect(fresh.status).toBe(200);
    expect(fresh.body.state).toBeNull();
    expect(fresh.body.allowedActions).toEqual(['propose']);

    const proposed = await as.designer!.post(url(id), {
      action: 'propose',
      reason: 'narrowest mode below the second channel',
      tolerances: { energyMeV: 0.05, minQuality: 200 },
    });
    expect(proposed.status, JSON.stringify(proposed.body)).toBe(200);
    expect(proposed.body.state).toBe('candidate');
    expect(proposed.body.tolerances).toEqual({ energyMeV: 0.05, minQuality: 200 });
    expect(proposed.body.proposedBy.id).toBe(lab.as('designer').id);

    const review = await as.reviewer!.post(url(id), { action: 'start_review' });
    expect(review.body.state).toBe('under_review');
    const approved = await as.reviewer!.post(url(id), { action: 'approve', reason: 'Q and tolerances fit the process' });
    expect(approved.status).toBe(200);
    expect(approved.body.state).toBe('approved');
    expect(approved.body.reviewedBy.id).toBe(lab.as('reviewer').id);
    expect(approved.body.reviewReason).toBe('Q and tolerances fit the process');

    const sent = await as.designer!.post(url(id), { action: 'send', batch: 'wafer HL-7' });
    expect(sent.body.state).toBe('sent');
    expect(sent.body.batch).toBe('wafer HL-7');

    // Typed in with σ: ΔE = 4.25 − 4.2 = 0.05 meV = +1.19 % = 2.5 σ (σ = 0.02 meV); arithmetic, no source.
    const measured = await as.designer!.post(url(id), { action: 'measure', energy: 4.25, width: 0.015, energyUncertainty: 0.02, widthUncertainty: 0.001 });
    expect(measured.status, JSON.stringify(measured.body)).toBe(200);
    expect(measured.body.state).toBe('measured');
    const e = measured.body.measurement.energyComparison;
    expect(e.percent).toBeCloseTo((100 * 0.05) / 4.2, 9);
    expect(e.sigmas).toBeCloseTo(2.5, 9);
    const w = measured.body.measurement.widthComparison;
    expect(w.percent).toBeCloseTo(25, 9);
    expect(w.sigmas).toBeCloseTo(3, 9);

    const history = measured.body.history.map((h: { action: string; from: string | null; to: string | null }) => `${h.action}:${h.from}->${h.to}`);
    expect(history).toEqual([
      'propose:null->candidate',
      'start_review:candidate->under_review',
      'approve:under_review->approved',
      'send:approved->sent',
      'measure:sent->measured',
    ]);
    const audits = await app.handle.db
      .select()
      .from(auditLog)
      .where(and(eq(auditLog.groupId, lab.groupId), eq(auditLog.action, 'fabrication.approve')));
    expect(audits).toHaveLength(1);
    expect(audits[0]!.actorId).toBe(lab.as('reviewer').id);
    expect(audits[0]!.details).toMatchObject({ resonanceId: id, from: 'under_review', to: 'approved', reason: 'Q and tolerances fit the process' });
  });

  it('a designer cannot approve, and nothing changes', async () => {
    const id = ids[1]!;
    await as.designer!.post(url(id), { action: 'propose', reason: 'second candidate' }).expect(200);
    const before = await snapshot(id);
    const res = await as.designer!.post(url(id), { action: 'approve', reason: 'looks fine to me' });
    expect(res.status).toBe(403);
    expect(res.body.code).toBe('forbidden');
    expect(res.body.message).toMatch(/reviewer role/);
    expect(await snapshot(id)).toEqual(before);
  });

  it('the proposer cannot approve or reject their own candidate, even as admin', async () => {
    const id = ids[2]!;
    await as.admin!.post(url(id), { action: 'propose', reason: 'admin proposes' }).expect(200);
    const before = await snapshot(id);
    for (const action of ['approve', 'reject'] as const) {
      const res = await as.admin!.post(url(id), { action, reason: 'my own' });
      expect(res.status).toBe(403);
      expect(res.body.code).toBe('own_candidate');
    }
    expect(await snapshot(id)).toEqual(before);
    const view = await as.admin!.get(url(id));
    expect(view.body.allowedActions).not.toContain('approve');
    // Someone else may.
    await as.reviewer!.post(url(id), { action: 'reject', reason: 'too close to the threshold' }).expect(200);
  });

  it('illegal transitions answer 409 saying what is allowed from here, and nothing changes', async () => {
    const id = ids[1]!; // a candidate
    const before = await snapshot(id);
    const send = await as.reviewer!.post(url(id), { action: 'send', batch: 'wafer X' });
    expect(send.status).toBe(409);
    expect(send.body.code).toBe('illegal_transition');
    expect(send.body.message).toContain('This resonance is candidate');
    expect(send.body.message).toContain('Allowed from candidate: start review');
    expect(send.body.message).toContain('approve');
    const measure = await as.designer!.post(url(id), { action: 'measure', energy: 5, width: 0.03 });
    expect(measure.status).toBe(409);
    const again = await as.designer!.post(url(id), { action: 'propose', reason: 'twice' });
    expect(again.status).toBe(409);
    expect(await snapshot(id)).toEqual(before);
    // From measured nothing but another measurement is allowed.
    const done = await as.reviewer!.post(url(ids[0]!), { action: 'approve', reason: 'again' });
    expect(done.status).toBe(409);
    expect(done.body.message).toContain('Allowed from measured: record the measurement');
  });

  it('a viewer cannot move states, tag or comment, and nothing changes', async () => {
    const id = ids[1]!;
    const before = await snapshot(id);
    const move = await as.viewer!.post(url(id), { action: 'start_review' });
    expect(move.status).toBe(403);
    const tag = await as.viewer!.patch(`/api/groups/${lab.groupId}/resonances/${id}`, { tags: ['fabricate'] });
    expect(tag.status).toBe(403);
    const comment = await as.viewer!.post(url(id, 'comments'), { body: 'I like it' });
    expect(comment.status).toBe(403);
    expect(await snapshot(id)).toEqual(before);
    // A viewer reads the record and comments.
    expect((await as.viewer!.get(url(id))).body.allowedActions).toEqual([]);
    expect((await as.viewer!.get(url(id, 'comments'))).status).toBe(200);
  });

  it('bad bodies are refused with the field named', async () => {
    const id = ids[1]!;
    const res = await as.reviewer!.post(url(id), { action: 'approve' });
    expect(res.status).toBe(400);
    expect(res.body.issues.map((i: { path: string }) => i.path)).toContain('reason');
    const unknown = await as.reviewer!.post(url(id), { action: 'bless', reason: 'x' });
    expect(unknown.status).toBe(400);
    expect(unknown.body.message).toMatch(/action must be one of/);
    const neither = await as.designer!.post(url(id), { action: 'measure', energy: 5 });
    expect(neither.status).toBe(400);
  });

  it('comments keep their mentions; a non-member cannot be mentioned', async () => {
    const id = ids[1]!;
    const ok = await as.reviewer!.post(url(id, 'comments'), { body: 'Can you check the gate?', mentions: [lab.as('designer').id] });
    expect(ok.status, JSON.stringify(ok.body)).toBe(201);
    expect(ok.body.mentions).toEqual([{ id: lab.as('designer').id, name: lab.as('designer').name }]);
    const stranger = await createLab(app.handle.db, ['designer']);
    const bad = await as.reviewer!.post(url(id, 'comments'), { body: 'hello', mentions: [stranger.as('designer').id] });
    expect(bad.status).toBe(400);
    expect(bad.body.issues[0].path).toBe('mentions.0');
    const list = await as.viewer!.get(url(id, 'comments'));
    expect(list.body.items.map((c: { body: string }) => c.body)).toEqual(['Can you check the gate?']);
  });

  it('takes a measurement from a completed peak fit of a measured trace, with its σ', async () => {
    const db = app.handle.db;
    const [trace] = await db
      .insert(measuredTraces)
      .values({
        groupId: lab.groupId,
        deviceName: 'HL-7 die 3',
        fileName: 'die3.csv',
        temperatureMK: 100,
        content: 'E,T\n1,0',
        columns: ['E', 'T'],
        selection: {},
        energies: [1],
        transmission: [0],
      })
      .returning();
    const peaks = [{ energy: 6.29, energyError: 0.004, width: 0.25, widthError: 0.01 }];
    const [fit] = await db
      .insert(peakFits)
      .values({ groupId: lab.groupId, traceId: trace!.id, request: {}, status: 'completed', result: { peaks } as never })
      .returning();
    const [failed] = await db
      .insert(peakFits)
      .values({ groupId: lab.groupId, traceId: trace!.id, request: {}, status: 'failed', error: 'did not converge' })
      .returning();
    // ids[2] was rejected above: propose again, approve, send.
    await as.designer!.post(url(ids[2]!), { action: 'propose', reason: 'second try with a wider gate' }).expect(200);
    await as.reviewer!.post(url(ids[2]!), { action: 'approve', reason: 'fine now' }).expect(200);
    await as.reviewer!.post(url(ids[2]!), { action: 'send', batch: 'wafer HL-8' }).expect(200);
    const before = await snapshot(ids[2]!);
    const notDone = await as.designer!.post(url(ids[2]!), { action: 'measure', fitId: failed!.id });
    expect(notDone.status).toBe(409);
    expect(notDone.body.code).toBe('fit_not_completed');
    const noPeak = await as.designer!.post(url(ids[2]!), { action: 'measure', fitId: fit!.id, peak: 3 });
    expect(noPeak.status).toBe(400);
    expect(noPeak.body.issues[0].path).toBe('peak');
    expect(await snapshot(ids[2]!)).toEqual(before);
    const res = await as.designer!.post(url(ids[2]!), { action: 'measure', fitId: fit!.id, peak: 0 });
    expect(res.status, JSON.stringify(res.body)).toBe(200);
    const m = res.body.measurement;
    expect(m.source).toBe('fit');
    expect(m.fitId).toBe(fit!.id);
    // Predicted E = 6.3, Γ = 0.2 (fixture); ΔE = −0.01 meV = −0.159 % = −2.5 σ; ΔΓ = +0.05 meV = +25 % = +5 σ (arithmetic, no source).
    expect(m.energyComparison.percent).toBeCloseTo((-100 * 0.01) / 6.3, 9);
    expect(m.energyComparison.sigmas).toBeCloseTo(-2.5, 9);
    expect(m.widthComparison.percent).toBeCloseTo(25, 9);
    expect(m.widthComparison.sigmas).toBeCloseTo(5, 9);
  });

  it('lists the review queue and the Fabrication page by state', async () => {
    const queue = await as.reviewer!.get(`/api/groups/${lab.groupId}/fabrication?state=candidate,under_review`);
    expect(queue.status).toBe(200);
    expect(queue.body.items.map((i: { resonanceId: string }) => i.resonanceId)).toEqual([ids[1]]);
    expect(queue.body.items[0].downloads).toBeNull();
    const fab = await as.viewer!.get(`/api/groups/${lab.groupId}/fabrication?state=approved,sent,measured`);
    // Newest change first: ids[2] was measured after ids[0].
    expect(fab.body.items.map((i: { resonanceId: string }) => i.resonanceId)).toEqual([ids[2], ids[0]]);
    expect(fab.body.items[0].downloads.gdsii).toMatch(/layout\.gds$/);
    const bad = await as.viewer!.get(`/api/groups/${lab.groupId}/fabrication?state=shipped`);
    expect(bad.status).toBe(400);
  });
});
