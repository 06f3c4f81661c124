// Group backup and restore (issue 7): the archive of one group restored into another
// holds the same models, versions, runs, spectra, resonances (tags, notes), mode
// vectors and images, measured traces, peak fits with their fitted resonances, pole
// currents and completed mode maps, byte for byte; a bad archive is refused whole.
import { readFileSync } from 'node:fs';
import { inlineCompute } from '../../server/compute/compute-pool.js';
import { gzipSync, gunzipSync } from 'node:zlib';
import { count, eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { cavityModels, modelVersions } from '../../server/db/schema/models.js';
import { memberships } from '../../server/db/schema/groups.js';
import { resonances } from '../../server/db/schema/catalogue.js';
import { measuredTraces, peakFits } from '../../server/db/schema/fits.js';
import { modeMaps, resonanceCurrents } from '../../server/db/schema/mode-maps.js';
import { handleModeMapJob } from '../../server/modemaps/mode-map-worker.js';
import { ModeMapService } from '../../server/modemaps/mode-map-service.js';
import { runModeMapTask } from '../../server/modemaps/mode-map-task.js';
import type { ModeMapQueue } from '../../server/modemaps/mode-map-queue.js';
import { runs } from '../../server/db/schema/runs.js';
import { runEngineTask, type EngineTaskResult } from '../../server/jobs/engine-task.js';
import { handleRunJob } from '../../server/jobs/run-job.js';
import { CatalogueService } from '../../server/catalogue/catalogue-service.js';
import { ModelService } from '../../server/models/model-service.js';
import { RunService } from '../../server/runs/run-service.js';
import { createLab, type Lab } from './lab-fixture.js';
import { signInAs, type SignedIn } from './sign-in-as.js';
import { recordingQueue, startTestApp, type TestApp } from './test-app.js';
import { smallRectangle, smallWindow } from './fixtures/small-cavity.js';

let app: TestApp;
let source: Lab;
let target: Lab;
let sourceAdmin: SignedIn;
let targetAdmin: SignedIn;
let reference: EngineTaskResult;
/** The source's map of a pole (completed) and of the same pole with a Husimi map (still queued). */
let completedMapId: string;
let queuedMapId: string;
const mapQueue: ModeMapQueue = { enqueue: async (id) => `map-job-${id}` };
/** The demo lab's invented measured trace. */
const traceFile = readFileSync(new URL('../../catalogue/traces/hl-rect-r3-100mK.csv', import.meta.url));

const uuid = /[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}/g;

/** Archive lines with each id replaced by the order it first appears in, and the header dropped. */
function normalised(archive: Buffer): string[] {
  const seen = new Map<string, number>();
  return gunzipSync(archive)
    .toString('utf8')
    .split('\n')
    .filter((l) => l && !l.startsWith('{"type":"header"'))
    .map((l) => l.replace(uuid, (id) => `#${seen.get(id) ?? seen.set(id, seen.size).get(id)}`));
}

async function download(user: SignedIn, lab: Lab, members = false): Promise<Buffer> {
  const res = await user
    .get(`/api/groups/${lab.groupId}/backup?members=${members}`)
    .buffer(true)
    .parse((r, cb) => {
      const chunks: Buffer[] = [];
      r.on('data', (c: Buffer) => chunks.push(c));
      r.on('end', () => cb(null, Buffer.concat(chunks)));
    });
  expect(res.status).toBe(200);
  expect(res.headers['content-type']).toBe('application/gzip');
  expect(res.headers['content-disposition']).toMatch(/attachment; filename="poleward-fixture-[0-9a-f]+-\d{4}-\d\d-\d\d\.jsonl\.gz"/);
  return res.body as Buffer;
}

function restore(user: SignedIn, lab: Lab, body: Buffer) {
  return user.agent.post(`/api/groups/${lab.groupId}/restore`).set('X-CSRF-Token', user.csrf).set('Content-Type', 'application/gzip').send(body);
}

function lines(archive: Buffer) {
  return gunzipSync(archive).toString('utf8').split('\n').filter(Boolean);
}

async function groupRowCounts(groupId: string) {
  const [m] = await app.handle.db.select({ n: count() }).from(cavityModels).where(eq(cavityModels.groupId, groupId));
  const [r] = await app.handle.db.select({ n: count() }).from(runs).where(eq(runs.groupId, groupId));
  const [s] = await app.handle.db.select({ n: count() }).from(resonances).where(eq(resonances.groupId, groupId));
  const [t] = await app.handle.db.select({ n: count() }).from(measuredTraces).where(eq(measuredTraces.groupId, groupId));
  const [f] = await app.handle.db.select({ n: count() }).from(peakFits).where(eq(peakFits.groupId, groupId));
  const [c] = await app.handle.db
    .select({ n: count() })
    .from(resonanceCurrents)
    .innerJoin(resonances, eq(resonances.id, resonanceCurrents.resonanceId))
    .where(eq(resonances.groupId, groupId));
  const [k] = await app.handle.db.select({ n: count() }).from(modeMaps).where(eq(modeMaps.groupId, groupId));
  return { models: m!.n, runs: r!.n, resonances: s!.n, traces: t!.n, fits: f!.n, currents: c!.n, maps: k!.n };
}

beforeAll(async () => {
  app = await startTestApp({ modeMapQueue: mapQueue });
  const db = app.handle.db;
  source = await createLab(db, ['admin', 'designer', 'viewer']);
  target = await createLab(db, ['admin']);
  // The source's designer is also in the target group: authorship follows by e-mail.
  await db.insert(memberships).values({ groupId: target.groupId, userId: source.as('designer').id, role: 'designer' });
  reference = runEngineTask({ kind: 'pole-search', document: smallRectangle('Backup'), window: smallWindow, spectrumPoints: 400 });

  const designer = source.as('designer').id;
  const models = new ModelService(db, inlineCompute);
  const runService = new RunService(db, recordingQueue(), inlineCompute);
  const a = await models.create(source.groupId, designer, smallRectangle('Backup dot A'));
  await models.update(
    source.groupId,
    designer,
    a.id,
    smallRectangle('Backup dot A', {
      leads: [
        { side: 'left', start: 6, width: 8, name: 'source' },
        { side: 'right', start: 6, width: 8, name: 'drain' },
      ],
    }),
  );
  const b = await models.create(source.groupId, designer, smallRectangle('Backup dot B'));
  for (const [modelId, version] of [
    [a.id, 1],
    [a.id, 2],
    [b.id, 1],
  ] as const) {
    const run = await runService.create(source.groupId, designer, { kind: 'pole-search', modelId, version, window: smallWindow });
    await handleRunJob({ db, compute: async () => reference }, { runId: run.id, retryCount: 0, retryLimit: 3 });
  }
  // One run still waiting in the queue when the backup is made.
  await runService.create(source.groupId, designer, { kind: 'transmission', modelId: b.id, window: { emin: 3, emax: 6, points: 50 } });
  const catalogue = new CatalogueService(db);
  const [first] = await db.select({ id: resonances.id }).from(resonances).where(eq(resonances.groupId, source.groupId)).limit(1);
  await catalogue.label(source.groupId, designer, first!.id, { tags: ['device-3', 'check'], notes: 'Matches the second cool-down, Δ < 1 µeV.' });

  sourceAdmin = await signInAs(app, source.as('admin').email);
  targetAdmin = await signInAs(app, target.as('admin').email);

  // A measured trace of model A, fitted (in the request): one fitted resonance with no run.
  const member = await signInAs(app, source.as('designer').email);
  const trace = await member.agent
    .post(`/api/groups/${source.groupId}/traces`)
    .set('X-CSRF-Token', member.csrf)
    .field('deviceName', 'Dot A cooldown 2')
    .field('temperatureMK', '100')
    .field('x', 'energy_ueV')
    .field('xUnit', 'ueV')
    .field('y', 'G_uS')
    .field('yUnit', 'uS')
    .field('notes', 'lock-in, 2 µV')
    .field('modelId', a.id)
    .attach('file', traceFile, { filename: 'dot-a-100mK.csv', contentType: 'text/csv' });
  expect(trace.status, JSON.stringify(trace.body)).toBe(201);
  const fit = await member.post(`/api/groups/${source.groupId}/fits`, {
    source: { kind: 'trace', traceId: trace.body.id },
    lineshape: 'thermal',
    temperatureMK: 100,
  });
  expect(fit.status, JSON.stringify(fit.body)).toBe(201);
  expect(fit.body.catalogueIds).toHaveLength(1);

  // A map of a pole, computed; the same pole with a Husimi map, left queued.
  const completed = await member.post(`/api/groups/${source.groupId}/mode-maps`, { resonanceId: first!.id });
  expect(completed.status, JSON.stringify(completed.body)).toBe(202);
  completedMapId = completed.body.id;
  await handleModeMapJob({ db, compute: (task) => Promise.resolve(runModeMapTask(task)) }, { mapId: completedMapId, retryCount: 0, retryLimit: 2 });
  const queued = await member.post(`/api/groups/${source.groupId}/mode-maps`, { resonanceId: first!.id, husimi: { directions: 8 } });
  expect(queued.status, JSON.stringify(queued.body)).toBe(202);
  queuedMapId = queued.body.id;
}, 180_000);
afterAll(async () => {
  await app?.close();
});

describe('group backup and restore', () => {
  it('round trip: the restored group holds the same models, runs, resonances and figures, with new ids', async () => {
    const archive = await download(sourceAdmin, source);
    const before = lines(archive);
    expect(JSON.parse(before[0]!)).toMatchObject({ type: 'header', format: 'poleward-group-backup', version: 2 });
    expect(JSON.parse(before.at(-1)!)).toMatchObject({
      type: 'end',
      counts: {
        model: 2,
        modelVersion: 3,
        run: 4,
        spectrum: 3,
        resonance: 3 * reference.poles.length,
        mode: 3 * reference.poles.length,
        modeImage: 6 * reference.poles.length,
      },
    });
    const poleCurrents = reference.poles.filter((p) => p.current).length;
    expect(poleCurrents).toBe(reference.poles.length);
    expect(JSON.parse(before.at(-1)!).counts).toMatchObject({
      measuredTrace: 1,
      peakFit: 1,
      fittedResonance: 1,
      resonanceCurrent: 3 * poleCurrents,
      modeMap: 1,
    });
    // Only the completed map: the one still queued is asked for again after a restore.
    expect(before.some((l) => l.includes(completedMapId))).toBe(true);
    expect(before.some((l) => l.includes(queuedMapId))).toBe(false);
    // The fitted resonance of the trace (no run) is a record of its own, not a computed one.
    expect(before.filter((l) => l.startsWith('{"type":"resonance"')).every((l) => JSON.parse(l).runId)).toBe(true);
    expect(JSON.parse(before.find((l) => l.startsWith('{"type":"fittedResonance"'))!)).toMatchObject({ runId: null, tags: ['fitted'] });

    // R per lead travels with each spectrum (two leads, one value per energy).
    for (const l of before.filter((l) => l.startsWith('{"type":"spectrum"'))) {
      const spectrum = JSON.parse(l);
      expect(spectrum.reflection).toHaveLength(2);
      for (const row of spectrum.reflection) expect(row).toHaveLength(spectrum.energies.length);
    }
    const res = await restore(targetAdmin, target, archive);
    expect(res.status).toBe(201);
    expect(res.body.restored).toMatchObject({
      models: 2,
      modelVersions: 3,
      runs: 4,
      resonances: 3 * reference.poles.length,
      measuredTrace: 1,
      peakFit: 1,
      fittedResonance: 1,
      resonanceCurrent: 3 * poleCurrents,
      modeMap: 1,
    });
    // Row by row in the database too: the same counts, but for the queued map left out.
    expect(await groupRowCounts(target.groupId)).toEqual({ ...(await groupRowCounts(source.groupId)), maps: 1 });
    // The derived figures stored with each version are not in the archive: the restore
    // computes them again from the document, the same as the source's.
    const figures = async (groupId: string) =>
      (
        await app.handle.db
          .select({ name: cavityModels.name, version: modelVersions.version, derived: modelVersions.derived })
          .from(modelVersions)
          .innerJoin(cavityModels, eq(cavityModels.id, modelVersions.modelId))
          .where(eq(modelVersions.groupId, groupId))
      ).sort((x, y) => x.name.localeCompare(y.name) || x.version - y.version);
    const restoredFigures = await figures(target.groupId);
    expect(restoredFigures).toHaveLength(3);
    expect(restoredFigures.every((f) => f.derived !== null)).toBe(true);
    expect(restoredFigures).toEqual(await figures(source.groupId));

    const again = await download(targetAdmin, target);
    const a = normalised(archive);
    const b = normalised(again);
    // The unfinished run comes back cancelled (its worker belonged to the other group's server).
    const unfinished = (l: string) => l.includes('"type":"run"') && l.includes('"kind":"transmission"');
    expect(b.filter((l) => !unfinished(l))).toEqual(a.filter((l) => !unfinished(l)));
    const restoredQueued = JSON.parse(b.find(unfinished)!);
    expect(restoredQueued.status).toBe('cancelled');
    expect(restoredQueued.error).toMatch(/unfinished when the group was backed up/);
    // New ids: nothing of the source's ids is in the restored group.
    const sourceIds = new Set(
      lines(archive)
        .slice(1)
        .flatMap((l) => l.match(uuid) ?? []),
    );
    const targetIds = lines(again)
      .slice(1)
      .flatMap((l) => l.match(uuid) ?? []);
    expect(targetIds.some((id) => sourceIds.has(id))).toBe(false);

    // The restored catalogue answers like the source's, tags and notes included.
    const tagged = await targetAdmin.get(`/api/groups/${target.groupId}/catalogue?tag=device-3`);
    expect(tagged.status).toBe(200);
    expect(tagged.body.total).toBe(1);
    expect(tagged.body.items[0].notes).toBe('Matches the second cool-down, Δ < 1 µeV.');
    const img = await targetAdmin.get(`/api/groups/${target.groupId}/resonances/${tagged.body.items[0].id}/mode.png?size=thumb`);
    expect(img.status).toBe(200);

    // The fit, its trace and its fitted resonance are linked to each other in the restored group.
    const restoredLines = lines(again).map((l) => JSON.parse(l));
    const fit = restoredLines.find((r) => r.type === 'peakFit');
    const trace = restoredLines.find((r) => r.type === 'measuredTrace');
    expect(fit.traceId).toBe(trace.id);
    const fitted = await targetAdmin.get(`/api/groups/${target.groupId}/catalogue?source=fitted`);
    expect(fitted.body.total).toBe(1);
    expect(fitted.body.items[0]).toMatchObject({ source: 'fitted', fitId: fit.id, runId: null });
    // Ids inside the JSON a fit keeps follow too.
    const fittedRecord = restoredLines.find((r) => r.type === 'fittedResonance');
    expect(fittedRecord.details.fit).toMatchObject({ fitId: fit.id, traceId: trace.id });
    expect(fit.request.source).toMatchObject({ kind: 'trace', traceId: trace.id });
    const restoredPoles = new Set(restoredLines.filter((r) => r.type === 'resonance').map((r) => r.id));
    expect(fit.comparison.length).toBe(1);
    // The trace's peak is compared with the nearest computed pole of model A: the restored one.
    expect(restoredPoles.has(fit.comparison[0].pole.id)).toBe(true);
    const fitView = await targetAdmin.get(`/api/groups/${target.groupId}/fits/${fit.id}`);
    expect(fitView.status).toBe(200);
    expect(fitView.body).toMatchObject({ status: 'completed', traceId: trace.id, deviceName: 'Dot A cooldown 2' });
    // The pole's current is served, and asking again for the restored map finds it in the cache.
    const map = restoredLines.find((r) => r.type === 'modeMap');
    const current = await targetAdmin.get(`/api/groups/${target.groupId}/resonances/${map.resonanceId}/current`);
    expect(current.status).toBe(200);
    const asked = await new ModeMapService(app.handle.db, mapQueue).create(target.groupId, target.as('admin').id, {
      resonanceId: map.resonanceId,
      husimi: null,
    });
    expect(asked.created).toBe(false);
    expect(asked.view.status).toBe('completed');
  });

  it('a restore into a group that is not empty is refused (409) and changes nothing', async () => {
    const archive = await download(sourceAdmin, source);
    const before = await groupRowCounts(source.groupId);
    const res = await restore(sourceAdmin, source, archive);
    expect(res.status).toBe(409);
    expect(res.body.code).toBe('group_not_empty');
    expect(await groupRowCounts(source.groupId)).toEqual(before);
  });

  it('an archive of runs stored before reflection was kept restores, and their spectra answer reflection null', async () => {
    const empty = await createLab(app.handle.db, ['admin']);
    const admin = await signInAs(app, empty.as('admin').email);
    const old = lines(await download(sourceAdmin, source)).map((l) => {
      if (!l.startsWith('{"type":"spectrum"')) return l;
      const { reflection: _r, ...rest } = JSON.parse(l);
      return JSON.stringify(rest);
    });
    const res = await restore(admin, empty, gzipSync(old.join('\n')));
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    const list = await admin.get(`/api/groups/${empty.groupId}/runs?status=completed`);
    expect(list.status).toBe(200);
    const completed = list.body.items.filter((r: { status: string }) => r.status === 'completed');
    expect(completed.length).toBeGreaterThan(0);
    const spectrum = await admin.get(`/api/groups/${empty.groupId}/runs/${completed[0].id}/spectrum`);
    expect(spectrum.status).toBe(200);
    expect(spectrum.body.energies.length).toBeGreaterThan(0);
    expect(spectrum.body.reflection).toBeNull();
  });

  it('a bad archive is refused whole, saying what is wrong and where', async () => {
    const empty = await createLab(app.handle.db, ['admin']);
    const admin = await signInAs(app, empty.as('admin').email);
    const good = lines(await download(sourceAdmin, source));

    const notGzip = await restore(admin, empty, Buffer.from('models,runs\n1,2\n'));
    expect(notGzip.status).toBe(400);
    expect(notGzip.body.issues[0]).toEqual({ path: 'file', message: expect.stringMatching(/not a gzip file/) });

    // A resonance with a bad energy near the end: the models and runs before it must not be written.
    const at = good.findLastIndex((l) => l.startsWith('{"type":"resonance"'));
    const bad = [...good];
    bad[at] = bad[at]!.replace(/"energy":[^,]+/, '"energy":"4.2 meV"');
    const res = await restore(admin, empty, gzipSync(bad.join('\n')));
    expect(res.status).toBe(400);
    expect(res.body.code).toBe('invalid_backup');
    expect(res.body.issues).toEqual([{ path: `line ${at + 1} (resonance) energy`, message: expect.stringMatching(/number/) }]);

    const dangling = good.map((l) => (l.startsWith('{"type":"spectrum"') ? l.replace(/"runId":"[^"]+"/, '"runId":"00000000-0000-4000-8000-000000000000"') : l));
    const res2 = await restore(admin, empty, gzipSync(dangling.join('\n')));
    expect(res2.status).toBe(400);
    expect(res2.body.issues[0].message).toMatch(/refers to run 00000000-0000-4000-8000-000000000000, which is not in the archive/);

    const truncated = await restore(admin, empty, gzipSync(good.slice(0, -1).join('\n')));
    expect(truncated.status).toBe(400);
    expect(truncated.body.issues[0].message).toMatch(/without its end record/);

    const otherFile = await restore(admin, empty, gzipSync('{"type":"header","format":"something-else","version":1}\n'));
    expect(otherFile.status).toBe(400);
    expect(otherFile.body.issues[0].path).toBe('line 1 (header) format');

    expect(await groupRowCounts(empty.groupId)).toEqual({ models: 0, runs: 0, resonances: 0, traces: 0, fits: 0, currents: 0, maps: 0 });
  });

  it('a peak fit or a pole current that does not fit the archive is refused whole, naming the record and field', async () => {
    const empty = await createLab(app.handle.db, ['admin']);
    const admin = await signInAs(app, empty.as('admin').email);
    const good = lines(await download(sourceAdmin, source));

    const lost = '00000000-0000-4000-8000-000000000001';
    const fitAt = good.findIndex((l) => l.startsWith('{"type":"peakFit"'));
    const fit = JSON.parse(good[fitAt]!);
    const broken = [...good];
    broken[fitAt] = JSON.stringify({ ...fit, traceId: lost });
    const res = await restore(admin, empty, gzipSync(broken.join('\n')));
    expect(res.status).toBe(400);
    expect(res.body.code).toBe('invalid_backup');
    expect(res.body.issues).toEqual([{ path: `peakFit ${fit.id} traceId`, message: `refers to trace ${lost}, which is not in the archive` }]);

    const currentAt = good.findIndex((l) => l.startsWith('{"type":"resonanceCurrent"'));
    const current = JSON.parse(good[currentAt]!);
    const short = [...good];
    short[currentAt] = JSON.stringify({ ...current, vectors: Buffer.from(current.vectors, 'base64').subarray(8).toString('base64') });
    const res2 = await restore(admin, empty, gzipSync(short.join('\n')));
    expect(res2.status).toBe(400);
    expect(res2.body.issues).toEqual([
      {
        path: `resonanceCurrent of resonance ${current.resonanceId} vectors`,
        message: expect.stringMatching(/must hold a float32 pair for each of the mask's \d+ sites/),
      },
    ]);

    expect(await groupRowCounts(empty.groupId)).toEqual({ models: 0, runs: 0, resonances: 0, traces: 0, fits: 0, currents: 0, maps: 0 });
  });

  it('only an admin of the group may back it up or restore into it', async () => {
    const designer = await signInAs(app, source.as('designer').email);
    expect((await designer.get(`/api/groups/${source.groupId}/backup`)).status).toBe(403);
    expect((await restore(designer, target, gzipSync('x'))).status).toBe(403);
    // An admin of another group does not even learn that the group exists.
    expect((await targetAdmin.get(`/api/groups/${source.groupId}/backup`)).status).toBe(404);
  });

  it('the member list is in the archive only when asked for', async () => {
    const withMembers = lines(await download(sourceAdmin, source, true)).filter((l) => l.startsWith('{"type":"member"'));
    expect(withMembers.map((l) => JSON.parse(l).email).sort()).toEqual(source.members.map((m) => m.email).sort());
    expect(lines(await download(sourceAdmin, source, false)).some((l) => l.startsWith('{"type":"member"'))).toBe(false);
  });
});
