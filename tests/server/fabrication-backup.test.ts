// Fabrication in the group backup: imported resonances (no run, no fit), fabrication records
// and comments survive a backup of one group restored into another, linked to the new ids
// and to the same people (by e-mail) where they are members of the target group.
import { gunzipSync } from 'node:zlib';
import { eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { resonances } from '../../server/db/schema/catalogue.js';
import { resonanceComments, resonanceFabrication } from '../../server/db/schema/fabrication.js';
import { memberships } from '../../server/db/schema/groups.js';
import { insertResonances } from './fabrication-fixture.js';
import { createLab, type Lab } from './lab-fixture.js';
import { signInAs, type SignedIn } from './sign-in-as.js';
import { startTestApp, type TestApp } from './test-app.js';

let app: TestApp;
let source: Lab;
let lab: Lab;
let target: Lab;
const as: Record<string, SignedIn> = {};
let ids: string[];

beforeAll(async () => {
  app = await startTestApp();
  source = await createLab(app.handle.db, ['admin']);
  lab = await createLab(app.handle.db, ['admin', 'designer', 'reviewer']);
  target = await createLab(app.handle.db, ['admin']);
  // The designer and the reviewer are members of the target group too.
  for (const role of ['designer', 'reviewer'] as const)
    await app.handle.db.insert(memberships).values({ groupId: target.groupId, userId: lab.as(role).id, role });
  ({ ids } = await insertResonances(app.handle.db, lab, [{ energy: 4.2, width: 0.012 }]));
  await insertResonances(app.handle.db, source, [{ energy: 5.5, width: 0.05 }]);
  as.source = await signInAs(app, source.as('admin').email);
  as.admin = await signInAs(app, lab.as('admin').email);
  as.designer = await signInAs(app, lab.as('designer').email);
  as.reviewer = await signInAs(app, lab.as('reviewer').email);
  as.target = await signInAs(app, target.as('admin').email);
});
afterAll(() => app?.close());

describe('fabrication in the group backup', () => {
  it('keeps imported resonances, fabrication records and comments across a backup and restore', async () => {
    // An imported resonance in the lab.
    const exported = await as.source!.get(`/api/groups/${source.groupId}/catalogue/export.json`);
    await as
      .admin!.agent.post(`/api/groups/${lab.groupId}/catalogue/import`)
      .set('X-CSRF-Token', as.admin!.csrf)
      .attach('file', Buffer.from(exported.text), 'source.json')
      .expect(201);
    // A record and a comment on the lab's own resonance.
    const url = `/api/groups/${lab.groupId}/resonances/${ids[0]}`;
    await as.designer!.post(`${url}/fabrication`, { action: 'propose', reason: 'isolated', tolerances: { energyMeV: 0.05 } }).expect(200);
    await as.reviewer!.post(`${url}/fabrication`, { action: 'approve', reason: 'fits' }).expect(200);
    await as.reviewer!.post(`${url}/comments`, { body: 'check the gate', mentions: [lab.as('designer').id] }).expect(201);

    const backup = await as
      .admin!.get(`/api/groups/${lab.groupId}/backup?members=false`)
      .buffer(true)
      .parse((r, cb) => {
        const chunks: Buffer[] = [];
        r.on('data', (c: Buffer) => chunks.push(c));
        r.on('end', () => cb(null, Buffer.concat(chunks)));
      });
    expect(backup.status).toBe(200);
    const types = gunzipSync(backup.body as Buffer)
      .toString('utf8')
      .split('\n')
      .filter(Boolean)
      .map((l) => JSON.parse(l).type as string);
    expect(types.filter((t) => t === 'importedResonance')).toHaveLength(1);
    expect(types.filter((t) => t === 'fabricationRecord')).toHaveLength(1);
    expect(types.filter((t) => t === 'resonanceComment')).toHaveLength(1);

    const res = await as
      .target!.agent.post(`/api/groups/${target.groupId}/restore`)
      .set('X-CSRF-Token', as.target!.csrf)
      .set('Content-Type', 'application/gzip')
      .send(backup.body as Buffer);
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    expect(res.body.restored).toMatchObject({ importedResonance: 1, fabricationRecord: 1, resonanceComment: 1 });

    const db = app.handle.db;
    const restored = await db.select().from(resonances).where(eq(resonances.groupId, target.groupId));
    expect(restored).toHaveLength(2);
    const imported = restored.find((r) => r.runId === null)!;
    expect(imported.energy).toBe(5.5);
    expect((imported.details as { provenance: { fileName: string } }).provenance.fileName).toBe('source.json');
    const own = restored.find((r) => r.runId !== null)!;
    const [record] = await db.select().from(resonanceFabrication).where(eq(resonanceFabrication.groupId, target.groupId));
    expect(record!.resonanceId).toBe(own.id);
    expect(record!.state).toBe('approved');
    expect(record!.toleranceEnergyMeV).toBe(0.05);
    expect(record!.proposedBy).toBe(lab.as('designer').id);
    expect(record!.reviewedBy).toBe(lab.as('reviewer').id);
    const [comment] = await db.select().from(resonanceComments).where(eq(resonanceComments.groupId, target.groupId));
    expect(comment!.resonanceId).toBe(own.id);
    expect(comment!.authorId).toBe(lab.as('reviewer').id);
    expect(comment!.mentions).toEqual([lab.as('designer').id]);
    // The restored group's API shows the record like the source's.
    const view = await as.target!.get(`/api/groups/${target.groupId}/resonances/${own.id}/fabrication`);
    expect(view.body.state).toBe('approved');
  });
});
