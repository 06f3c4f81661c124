// Catalogue answers kept by an API process (CatalogueAnswerCache) and the one-query access
// check (session, membership and catalogue generation read together), across two API
// processes: two apps on the same database, each with its own pool and its own kept
// answers and counts, as two processes have. A change made through one app, or by plain
// SQL as a worker writes, must show in the other's next answer; a removed member, a
// changed role and an ended session must be refused at the next request, kept answer or not.
import { and, eq, sql } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { resonances } from '../../server/db/schema/catalogue.js';
import { sessions } from '../../server/db/schema/credentials.js';
import { insertResonances } from '../../scripts/synthetic-catalogue.js';
import { createLab, type Lab } from './lab-fixture.js';
import { signInAs, type SignedIn } from './sign-in-as.js';
import { startTestApp, type TestApp } from './test-app.js';

const ROWS = 400; // two synthetic runs of 200 poles

let a: TestApp;
let b: TestApp;
let lab: Lab;

/** Database connections app `a` took from its pool while `run` ran: one per query (or transaction). */
async function checkoutsOf(run: () => Promise<unknown>): Promise<number> {
  let n = 0;
  const count = () => void n++;
  a.handle.pool.on('acquire', count);
  try {
    await run();
  } finally {
    a.handle.pool.off('acquire', count);
  }
  return n;
}

async function searchOn(who: SignedIn, query: string) {
  const res = await who.get(`/api/groups/${lab.groupId}/catalogue?${query}`);
  expect(res.status, JSON.stringify(res.body)).toBe(200);
  return res.body as { items: { id: string; tags: string[] }[]; total: number; totalKind: string; countedAt: string | null; countAgeSeconds: number | null };
}

beforeAll(async () => {
  a = await startTestApp();
  b = await startTestApp();
  lab = await createLab(a.handle.db, ['admin', 'designer', 'viewer', 'viewer', 'viewer']);
  await insertResonances(a.handle.db, lab.groupId, lab.as('admin').id, ROWS, 'fresh', 0x3c6ef372);
}, 120_000);

afterAll(async () => {
  await a?.close();
  await b?.close();
});

describe('kept catalogue answers', () => {
  it('answers a repeated search without querying again, and the same answer', async () => {
    const viewer = await signInAs(a, lab.members[2]!.email);
    const query = 'sort=width&dir=desc&pageSize=25';
    const first = await searchOn(viewer, query);
    let again: Awaited<ReturnType<typeof searchOn>> | undefined;
    // One connection: the session-and-membership query; the page and the count are kept.
    expect(await checkoutsOf(async () => (again = await searchOn(viewer, query)))).toBe(1);
    // The same answer; only the count's age is computed afresh.
    expect({ ...again!, countAgeSeconds: 0 }).toEqual({ ...first, countAgeSeconds: 0 });
    expect(first.totalKind).toBe('exact');
    // A different page of the same search is not the kept answer.
    expect(await checkoutsOf(() => searchOn(viewer, `${query}&page=2`))).toBeGreaterThan(1);
  });

  it('a label change made through another API process shows in the next answer, total included', async () => {
    const viewer = await signInAs(a, lab.members[2]!.email);
    const designer = await signInAs(b, lab.as('designer').email);
    const query = 'tag=freshness-check&sort=energy';
    expect(await searchOn(viewer, query)).toMatchObject({ total: 0, totalKind: 'exact', items: [] });
    expect(await searchOn(viewer, query)).toMatchObject({ total: 0, items: [] });

    const [row] = await a.handle.db.select({ id: resonances.id }).from(resonances).where(eq(resonances.groupId, lab.groupId)).limit(1);
    const patched = await designer.patch(`/api/groups/${lab.groupId}/resonances/${row!.id}`, { tags: ['freshness-check'] });
    expect(patched.status, JSON.stringify(patched.body)).toBe(200);

    const after = await searchOn(viewer, query);
    expect(after.items.map((i) => i.id)).toEqual([row!.id]);
    expect(after).toMatchObject({ total: 1, totalKind: 'exact' });
  });

  it('rows a worker inserts or a deletion removes (plain SQL, no API involved) show in the next answer', async () => {
    const viewer = await signInAs(a, lab.members[2]!.email);
    const query = 'sort=energy&dir=asc&pageSize=10';
    const before = await searchOn(viewer, query);
    expect(before.total).toBe(ROWS);
    await searchOn(viewer, query); // kept now

    // A copy of the lowest row, a little lower still: what a run's result writer adds.
    const [lowest] = await a.handle.db.select().from(resonances).where(eq(resonances.id, before.items[0]!.id));
    const { id: _id, searchText: _text, idx: _idx, runId: _run, ...copy } = lowest!;
    const [added] = await b.handle.db
      .insert(resonances)
      .values({ ...copy, energy: lowest!.energy - 1 })
      .returning({ id: resonances.id });
    const withNew = await searchOn(viewer, query);
    expect(withNew.items[0]!.id).toBe(added!.id);
    expect(withNew).toMatchObject({ total: ROWS + 1, totalKind: 'exact' });

    await b.handle.db.delete(resonances).where(and(eq(resonances.id, added!.id), eq(resonances.groupId, lab.groupId)));
    const withoutNew = await searchOn(viewer, query);
    expect(withoutNew.items.map((i) => i.id)).toEqual(before.items.map((i) => i.id));
    expect(withoutNew.total).toBe(ROWS);
  });

  it('a change in another group leaves this group’s kept answers alone', async () => {
    const viewer = await signInAs(a, lab.members[2]!.email);
    const other = await createLab(a.handle.db, ['admin']);
    const query = 'sort=quality&dir=desc&pageSize=25';
    await searchOn(viewer, query);
    await insertResonances(b.handle.db, other.groupId, other.as('admin').id, 200, 'elsewhere', 0x1234567);
    expect(await checkoutsOf(() => searchOn(viewer, query))).toBe(1);
  });
});

describe('access is checked on every request, kept answer or not', () => {
  it('a member removed through another API process gets 404 at the next request', async () => {
    const viewer = await signInAs(a, lab.members[3]!.email);
    const admin = await signInAs(b, lab.as('admin').email);
    const query = 'sort=date&dir=desc&pageSize=25';
    await searchOn(viewer, query);
    await searchOn(viewer, query); // answered from what app a kept
    const removed = await admin.delete(`/api/groups/${lab.groupId}/members/${lab.members[3]!.id}`);
    expect(removed.status).toBe(204);
    const res = await viewer.get(`/api/groups/${lab.groupId}/catalogue?${query}`);
    expect(res.status).toBe(404);
  });

  it('a role lowered through another API process is refused at the next write', async () => {
    const designer = await signInAs(a, lab.as('designer').email);
    const admin = await signInAs(b, lab.as('admin').email);
    const [row] = await a.handle.db.select({ id: resonances.id }).from(resonances).where(eq(resonances.groupId, lab.groupId)).limit(1);
    expect((await designer.patch(`/api/groups/${lab.groupId}/resonances/${row!.id}`, { notes: 'still a designer' })).status).toBe(200);
    const lowered = await admin.patch(`/api/groups/${lab.groupId}/members/${lab.as('designer').id}`, { role: 'viewer' });
    expect(lowered.status, JSON.stringify(lowered.body)).toBe(200);
    const refused = await designer.patch(`/api/groups/${lab.groupId}/resonances/${row!.id}`, { notes: 'no longer' });
    expect(refused.status).toBe(403);
    await admin.patch(`/api/groups/${lab.groupId}/members/${lab.as('designer').id}`, { role: 'designer' });
  });

  it('a session ended elsewhere (sign-out in another process, a password reset) is refused at the next request', async () => {
    const viewer = await signInAs(a, lab.members[4]!.email);
    const query = 'sort=energy&pageSize=25';
    await searchOn(viewer, query);
    await searchOn(viewer, query);
    await b.handle.db
      .update(sessions)
      .set({ revokedAt: sql`now()` })
      .where(eq(sessions.userId, lab.members[4]!.id));
    const res = await viewer.get(`/api/groups/${lab.groupId}/catalogue?${query}`);
    expect(res.status).toBe(401);
  });
});
