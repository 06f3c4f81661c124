// Peak fits through the API against the real database: the demo lab's invented measured
// trace (catalogue/traces/hl-rect-r3-100mK.csv) is uploaded, fitted, compared with the
// computed pole it was made from, and found in the catalogue; malformed files are refused
// with the line and column and leave nothing stored.
import { readFileSync } from 'node:fs';
import { count, eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { auditLog } from '../../server/db/schema/audit.js';
import { resonances } from '../../server/db/schema/catalogue.js';
import { measuredTraces, peakFits } from '../../server/db/schema/fits.js';
import { cavityModels, modelVersions } from '../../server/db/schema/models.js';
import { runs, spectra } from '../../server/db/schema/runs.js';
import { fitQueue, handleFitJob } from '../../server/fits/fit-job.js';
import { startBoss } from '../../server/jobs/boss.js';
import { superviseFits } from '../../server/jobs/fit-supervisor.js';
import { FIT_QUEUE } from '../../server/jobs/queues.js';
import { RunEvents } from '../../server/runs/run-events.js';
import { createLab, type Lab } from './lab-fixture.js';
import { signInAs, type SignedIn } from './sign-in-as.js';
import { startTestApp, testDatabaseUrl, type TestApp } from './test-app.js';

const trace = readFileSync(new URL('../../catalogue/traces/hl-rect-r3-100mK.csv', import.meta.url));
/** The pole of catalogue/hl-rect-r3.json the trace was computed around (engine output, `npm run engine -- poles`). */
const pole = { energy: 3.25511, width: 0.02455, petermann: 1.003 };
/** e²/h in µS (CODATA 2018). */
const E2H_US = 38.7404614;

let app: TestApp;
let lab: Lab;
let runEvents: RunEvents;
let designer: SignedIn;
let viewer: SignedIn;
let modelId: string;
let runId: string;
let poleId: string;
const queued: string[] = [];

async function stored() {
  const db = app.handle.db;
  const [t] = await db.select({ n: count() }).from(measuredTraces).where(eq(measuredTraces.groupId, lab.groupId));
  const [a] = await db.select({ n: count() }).from(auditLog).where(eq(auditLog.groupId, lab.groupId));
  return { traces: t!.n, audit: a!.n };
}

function upload(file: Buffer | string, name: string, fields: Record<string, string | number>, type = 'text/csv') {
  const req = designer.agent.post(`/api/groups/${lab.groupId}/traces`).set('X-CSRF-Token', designer.csrf);
  for (const [k, v] of Object.entries(fields)) req.field(k, String(v));
  return req.attach('file', Buffer.isBuffer(file) ? file : Buffer.from(file), { filename: name, contentType: type });
}

const energyFields = { deviceName: 'R3 cooldown 7', temperatureMK: 100, x: 'energy_ueV', xUnit: 'ueV', y: 'G_uS', yUnit: 'uS' };

beforeAll(async () => {
  runEvents = new RunEvents(testDatabaseUrl());
  await runEvents.start();
  app = await startTestApp({ fitQueue: { enqueue: async (id) => (queued.push(id), `job-${id}`) }, runEvents });
  const db = app.handle.db;
  lab = await createLab(db, ['admin', 'designer', 'viewer']);
  const [model] = await db.insert(cavityModels).values({ groupId: lab.groupId, name: 'HL tunnel-coupled rectangle R3' }).returning();
  modelId = model!.id;
  const [version] = await db
    .insert(modelVersions)
    .values({
      modelId,
      groupId: lab.groupId,
      version: 1,
      document: { leads: [] },
      family: 'rectangle',
      material: 'GaAs',
      effectiveMass: 0.067,
      spacingNm: 5,
      fieldT: 0,
      siteCount: 2400,
      leadCount: 2,
      hoppingMeV: 22.7,
      widthNm: 300,
      heightNm: 200,
      keyDimensions: { width: 300, height: 200 },
    })
    .returning();
  const [run] = await db
    .insert(runs)
    .values({ groupId: lab.groupId, modelVersionId: version!.id, kind: 'pole-search', status: 'completed', window: { emin: 3.2, emax: 3.3, gammaMax: 0.1 } })
    .returning();
  runId = run!.id;
  const [row] = await db
    .insert(resonances)
    .values({
      groupId: lab.groupId,
      runId,
      modelId,
      modelVersionId: version!.id,
      idx: 0,
      energy: pole.energy,
      width: pole.width,
      lifetimePs: 0.6582119569 / pole.width,
      quality: pole.energy / pole.width,
      partialWidths: [],
      petermann: pole.petermann,
      residual: 1e-12,
      bound: false,
      nearThreshold: false,
      overlapping: false,
      modelName: model!.name,
      modelVersion: 1,
      family: 'rectangle',
      material: 'GaAs',
      fieldT: 0,
      spacingNm: 5,
      widthNm: 300,
      heightNm: 200,
    })
    .returning({ id: resonances.id });
  poleId = row!.id;
  // A computed spectrum: a Breit–Wigner peak of the pole (T = 1 at E0) on 201 energies.
  const energies = Array.from({ length: 201 }, (_, i) => 3.2 + (0.1 * i) / 200);
  const t = energies.map((e) => 1 / (1 + ((2 * (e - pole.energy)) / pole.width) ** 2));
  await db.insert(spectra).values({
    runId,
    groupId: lab.groupId,
    energies,
    pairs: [
      { from: 0, to: 1 },
      { from: 1, to: 0 },
    ],
    transmission: [t, t],
    residual: energies.map(() => 0),
  });
  designer = await signInAs(app, lab.as('designer').email);
  viewer = await signInAs(app, lab.as('viewer').email);
});

afterAll(async () => {
  await app?.close();
  await runEvents?.close();
});

describe('measured traces', () => {
  let traceId: string;

  it('stores an uploaded trace with who, when, device, temperature and notes, converted to meV and T', async () => {
    const res = await upload(trace, 'hl-rect-r3-100mK.csv', { ...energyFields, notes: 'lock-in, 2 µV', modelId });
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    traceId = res.body.id;
    expect(res.body).toMatchObject({
      deviceName: 'R3 cooldown 7',
      temperatureMK: 100,
      notes: 'lock-in, 2 µV',
      modelId,
      points: 241,
      createdBy: lab.as('designer').name,
    });
    expect(res.body.columns).toEqual(['gate_mV', 'energy_ueV', 'G_uS']);
    // First data row of the file is line 5: energy 3180 µeV; G/(2e²/h) = T.
    const firstLine = trace.toString().split('\n')[4]!.split(',');
    expect(Math.abs(res.body.energies[0] - Number(firstLine[1]) / 1000)).toBeLessThan(1e-12);
    expect(Math.abs(res.body.transmission[0] - Number(firstLine[2]) / (2 * E2H_US))).toBeLessThan(1e-12);
    const list = await viewer.get(`/api/groups/${lab.groupId}/traces`);
    expect(list.body.map((t: { id: string }) => t.id)).toContain(traceId);
  });

  it('refuses a viewer', async () => {
    const res = await viewer.agent
      .post(`/api/groups/${lab.groupId}/traces`)
      .set('X-CSRF-Token', viewer.csrf)
      .field('deviceName', 'x')
      .attach('file', trace, { filename: 'a.csv', contentType: 'text/csv' });
    expect(res.status).toBe(403);
  });

  const good = 'energy_meV,T\n' + Array.from({ length: 20 }, (_, i) => `${3 + i * 0.01},${0.1 + 0.01 * i}`).join('\n');
  const lines = good.split('\n');
  const replaceLine = (n: number, text: string) => lines.map((l, i) => (i === n - 1 ? text : l)).join('\n');
  const plain = { deviceName: 'bad', temperatureMK: 50, x: 'energy_meV', xUnit: 'meV', y: 'T', yUnit: 'T' };

  it.each([
    ['text in a number', replaceLine(7, '3.05,abc'), /line 7, column "T": "abc" is not a number/],
    ['NaN', replaceLine(9, '3.07,NaN'), /line 9, column "T": NaN is not a finite number/],
    ['an empty cell', replaceLine(4, '3.02,'), /line 4, column "T": the cell is empty/],
    ['a short row', replaceLine(5, '3.03'), /line 5: 1 field, no value for column "T"/],
    ['a sweep that turns back', replaceLine(12, '3.0,0.2'), /line 12, column "energy_meV": 3 breaks the increasing order of the sweep \(line 11: 3\.09\)/],
    ['too few points', lines.slice(0, 5).join('\n'), /too few points: 4 .* at least 8/],
    ['no data at all', '# only a comment\n', /the file has no data rows/],
  ])('refuses %s with the line and the column, and stores nothing', async (_what, body, message) => {
    const before = await stored();
    const res = await upload(body, 'bad.csv', plain);
    expect(res.status).toBe(400);
    expect(res.body.code).toBe('invalid_trace');
    expect(res.body.message).toMatch(message);
    expect(res.body.message).toMatch(/Nothing was stored/);
    expect(res.body.issues[0].path).toBe('file');
    expect(await stored()).toEqual(before);
  });

  it('refuses a missing column, naming the columns the file has', async () => {
    const before = await stored();
    const res = await upload(good, 'bad.csv', { ...plain, y: 'G' });
    expect(res.status).toBe(400);
    expect(res.body.message).toMatch(/no column "G" for y \(the file has "energy_meV", "T"\)/);
    expect(await stored()).toEqual(before);
  });

  it('refuses a gate-voltage column without a lever arm (field issue)', async () => {
    const res = await upload(good, 'gate.csv', { ...plain, xUnit: 'mV' });
    expect(res.status).toBe(400);
    expect(res.body.issues.map((i: { path: string }) => i.path)).toContain('leverArm');
  });

  it('answers 413 to an oversized file and 415 to a file that is not text, storing nothing', async () => {
    const before = await stored();
    const big = await upload(Buffer.alloc(2 * 1024 * 1024 + 10, 0x31), 'big.csv', plain);
    expect(big.status).toBe(413);
    const png = await upload(Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 0, 0, 0, 13]), 'plot.png', plain, 'image/png');
    expect(png.status).toBe(415);
    const nul = await upload(Buffer.from('energy_meV,T\n1,\u0000\n'), 'nul.csv', plain);
    expect(nul.status).toBe(415);
    const latin1 = await upload(Buffer.from([0x45, 0x2c, 0x54, 0x0a, 0xe9, 0x0a]), 'latin.csv', plain);
    expect(latin1.status).toBe(415);
    expect(await stored()).toEqual(before);
  });

  it('previews the columns and first rows without storing', async () => {
    const before = await stored();
    const res = await designer.agent
      .post(`/api/groups/${lab.groupId}/traces/preview`)
      .set('X-CSRF-Token', designer.csrf)
      .attach('file', trace, { filename: 't.csv', contentType: 'text/csv' });
    expect(res.status).toBe(200);
    expect(res.body.columns).toEqual(['gate_mV', 'energy_ueV', 'G_uS']);
    expect(res.body.rowCount).toBe(241);
    expect(res.body.rows[0].line).toBe(5);
    expect(await stored()).toEqual(before);
  });

  describe('fits', () => {
    let fitId: string;

    it('fits the trace with a thermal lineshape, compares with the computed pole and files the fit in the catalogue', async () => {
      const res = await designer.post(`/api/groups/${lab.groupId}/fits`, { source: { kind: 'trace', traceId }, lineshape: 'thermal', temperatureMK: 100 });
      expect(res.status, JSON.stringify(res.body)).toBe(201);
      fitId = res.body.id;
      expect(res.body.status).toBe('completed');
      const [peak] = res.body.result.peaks;
      // The trace is the engine's transmission of this pole broadened at 100 mK plus 0.5% noise:
      // the thermal fit gives back Γ within a few of its own standard errors and 3%.
      expect(Math.abs(peak.width - pole.width) / pole.width).toBeLessThan(0.03);
      // The position within 15% of Γ: this many-channel device's peak sits a little off Re z
      // (its non-resonant background interferes), which the fit cannot know.
      expect(Math.abs(peak.energy - pole.energy) / pole.width).toBeLessThan(0.15);
      const [cmp] = res.body.comparison;
      expect(cmp.pole.id).toBe(poleId);
      expect(Math.abs(cmp.widthPercent - (100 * (peak.width - pole.width)) / pole.width)).toBeLessThan(1e-9 * 100);
      expect(Math.abs(cmp.widthSigmas - (peak.width - pole.width) / peak.widthError)).toBeLessThan(1e-9 * Math.abs(cmp.widthSigmas) + 1e-12);
      expect(res.body.catalogueIds).toHaveLength(1);
      const cat = await viewer.get(`/api/groups/${lab.groupId}/catalogue?source=fitted`);
      expect(cat.body.total).toBe(1);
      expect(cat.body.items[0]).toMatchObject({ source: 'fitted', fitId, modelId, petermann: null, thumbnailUrl: null, tags: ['fitted'] });
      expect(cat.body.items[0].notes).toMatch(/thermally broadened Breit–Wigner at 100 mK/);
      const computed = await viewer.get(`/api/groups/${lab.groupId}/catalogue?source=computed`);
      expect(computed.body.items.map((r: { id: string }) => r.id)).toEqual([poleId]);
      const found = await viewer.get(`/api/groups/${lab.groupId}/catalogue?q=fitted`);
      expect(found.body.items.map((r: { id: string }) => r.id)).toEqual(res.body.catalogueIds);
      const csv = await viewer.get(`/api/groups/${lab.groupId}/catalogue/export.csv?source=fitted`);
      expect(csv.text.split('\r\n')[0]).toMatch(/,source,fit_id$/);
      expect(csv.text).toMatch(new RegExp(`,fitted,${fitId}\\r\\n`));
      const detail = await viewer.get(`/api/groups/${lab.groupId}/resonances/${res.body.catalogueIds[0]}`);
      expect(detail.status).toBe(200);
      expect(detail.body.run).toBeNull();
    });

    it('a Breit–Wigner fit of the same trace is wider than the pole and says the temperature matters', async () => {
      const res = await designer.post(`/api/groups/${lab.groupId}/fits`, { source: { kind: 'trace', traceId }, lineshape: 'bw', temperatureMK: 100 });
      expect(res.status).toBe(201);
      const [peak] = res.body.result.peaks;
      expect(peak.width).toBeGreaterThan(pole.width * 1.2);
      expect(res.body.result.warnings.map((w: { code: string }) => w.code)).toContain('thermal_width');
    });

    it("fits a range of a run's computed spectrum and refuses a range with too few points", async () => {
      const res = await designer.post(`/api/groups/${lab.groupId}/fits`, { source: { kind: 'run', runId, pair: 0, from: 3.21, to: 3.3 }, lineshape: 'bw' });
      expect(res.status, JSON.stringify(res.body)).toBe(201);
      const [peak] = res.body.result.peaks;
      expect(Math.abs(peak.width - pole.width) / pole.width).toBeLessThan(1e-6);
      expect(res.body.comparison[0].pole.id).toBe(poleId);
      const none = await designer.post(`/api/groups/${lab.groupId}/fits`, { source: { kind: 'run', runId, pair: 0, from: 3.25, to: 3.2501 }, lineshape: 'bw' });
      expect(none.status).toBe(400);
      expect(none.body.code).toBe('too_few_points');
    });

    it('queues a large multi-peak fit; the worker computes it with progress and files it once even when run twice', async () => {
      const res = await designer.post(`/api/groups/${lab.groupId}/fits`, {
        source: { kind: 'trace', traceId },
        lineshape: 'thermal-fano',
        temperatureMK: 100,
        peaks: 3,
        background: 'linear',
      });
      expect(res.status, JSON.stringify(res.body)).toBe(202);
      expect(res.body.status).toBe('queued');
      expect(queued).toContain(res.body.id);
      await handleFitJob(app.handle.db, res.body.id);
      // A duplicate delivery finds the fit finished and leaves it alone.
      await handleFitJob(app.handle.db, res.body.id);
      const after = await viewer.get(`/api/groups/${lab.groupId}/fits/${res.body.id}`);
      expect(after.body.status).toBe('completed');
      expect(after.body.progressFraction).toBe(1);
      expect(after.body.result.peaks).toHaveLength(3);
      const [rows] = await app.handle.db.select({ n: count() }).from(resonances).where(eq(resonances.fitId, res.body.id));
      expect(rows!.n).toBe(3);
      const list = await viewer.get(`/api/groups/${lab.groupId}/fits`);
      expect(list.body.map((f: { id: string }) => f.id)).toEqual(expect.arrayContaining([fitId, res.body.id]));
      const [fitRow] = await app.handle.db.select({ attempt: peakFits.attempt }).from(peakFits).where(eq(peakFits.id, res.body.id));
      expect(fitRow!.attempt).toBe(1);
    });

    it("streams a queued fit's status and progress as server-sent events until it is done", async () => {
      const res = await designer.post(`/api/groups/${lab.groupId}/fits`, {
        source: { kind: 'trace', traceId },
        lineshape: 'thermal-fano',
        temperatureMK: 100,
        peaks: 3,
        background: 'linear',
      });
      expect(res.status, JSON.stringify(res.body)).toBe(202);
      const fit = res.body.id as string;
      let opened!: () => void;
      const isOpen = new Promise<void>((resolve) => (opened = resolve));
      const stream = viewer.agent
        .get(`/api/groups/${lab.groupId}/fits/${fit}/events`)
        .buffer(true)
        .parse((r, done) => {
          let text = '';
          r.on('data', (chunk: Buffer) => {
            text += chunk.toString();
            opened();
          });
          r.on('end', () => done(null, text));
        })
        .then((r) => r);
      await isOpen; // the first event (queued) is out before the worker starts
      await handleFitJob(app.handle.db, fit);
      const answer = await stream;
      expect(answer.status).toBe(200);
      expect(answer.headers['content-type']).toMatch(/^text\/event-stream/);
      const events = (answer.body as string)
        .split('\n\n')
        .filter((block) => block.startsWith('event: '))
        .map((block) => ({
          name: block.split('\n')[0]!.slice(7),
          data: JSON.parse(block.split('\n')[1]!.slice(6)) as { status: string; progressFraction: number | null },
        }));
      const statuses = events.filter((e) => e.name === 'progress').map((e) => e.data.status);
      expect(statuses[0]).toBe('queued');
      expect(statuses).toContain('running');
      expect(statuses.at(-1)).toBe('completed');
      expect(events.filter((e) => e.name === 'progress').at(-1)!.data.progressFraction).toBe(1);
      expect(events.at(-1)).toEqual({ name: 'done', data: { status: 'completed' } });
    });

    it("answers 404 to the event stream of a fit that is not the group's", async () => {
      const other = await viewer.get(`/api/groups/${lab.groupId}/fits/00000000-0000-4000-8000-000000000000/events`);
      expect(other.status).toBe(404);
    });

    it('puts a running fit whose worker died back in the queue, and a later worker finishes it', async () => {
      const boss = await startBoss({ databaseUrl: testDatabaseUrl() });
      try {
        const db = app.handle.db;
        const res = await designer.post(`/api/groups/${lab.groupId}/fits`, {
          source: { kind: 'trace', traceId },
          lineshape: 'thermal-fano',
          temperatureMK: 100,
          peaks: 3,
          background: 'linear',
        });
        expect(res.status, JSON.stringify(res.body)).toBe(202);
        const fit = res.body.id as string;
        // Queued on the real peak-fit queue, and fetched by a worker that then dies mid-fit:
        // the job is active, the fit running under attempt 1, its heartbeat a minute old.
        const jobId = await fitQueue(boss).enqueue(fit);
        await db.update(peakFits).set({ jobId }).where(eq(peakFits.id, fit));
        const [fetched] = await boss.fetch(FIT_QUEUE.name, { batchSize: 10 });
        expect(fetched).toBeDefined();
        await db
          .update(peakFits)
          .set({ status: 'running', attempt: 1, progressFraction: 0.3, heartbeatAt: new Date(Date.now() - 60_000) })
          .where(eq(peakFits.id, fit));
        // A fit of the same group whose worker beats its heartbeat is left alone.
        const alive = await designer.post(`/api/groups/${lab.groupId}/fits`, {
          source: { kind: 'trace', traceId },
          lineshape: 'thermal-fano',
          temperatureMK: 100,
          peaks: 3,
          background: 'linear',
        });
        await db.update(peakFits).set({ status: 'running', attempt: 1, heartbeatAt: new Date() }).where(eq(peakFits.id, alive.body.id));

        const report = await superviseFits({ db, boss, staleAfterSeconds: 30, groupId: lab.groupId });
        expect(report).toEqual({ handedOn: 1, failed: 0 });
        const [back] = await db.select().from(peakFits).where(eq(peakFits.id, fit));
        expect(back!.status).toBe('queued');
        expect(back!.error).toContain('the worker of attempt 1 stopped answering');
        const job = await boss.getJobById(FIT_QUEUE.name, jobId);
        expect(job?.state).toBe('retry');
        const [untouched] = await db.select({ status: peakFits.status }).from(peakFits).where(eq(peakFits.id, alive.body.id));
        expect(untouched!.status).toBe('running');
        // A second pass finds nothing more to do.
        expect(await superviseFits({ db, boss, staleAfterSeconds: 30, groupId: lab.groupId })).toEqual({ handedOn: 0, failed: 0 });

        // The retry's worker claims attempt 2, beats the heartbeat and finishes the fit.
        await handleFitJob(db, fit);
        const [done] = await db.select().from(peakFits).where(eq(peakFits.id, fit));
        expect(done!.status).toBe('completed');
        expect(done!.attempt).toBe(2);
        expect(done!.heartbeatAt!.getTime()).toBeGreaterThan(Date.now() - 30_000);
        await db.update(peakFits).set({ status: 'failed' }).where(eq(peakFits.id, alive.body.id));
      } finally {
        await boss.stop({ graceful: false, wait: true }).catch(() => {});
      }
    });
  });
});
