// Issue 7, defects 2, 3, 4, 6 and 7: every refusal is a 4xx that names the field and the
// limit, nothing is stored by a refused request, and heavy requests compute off the API
// thread so the event loop keeps answering health checks.
import { monitorEventLoopDelay } from 'node:perf_hooks';
import { deflateSync } from 'node:zlib';
import { count, eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { cavityModels } from '../../server/db/schema/models.js';
import { runs } from '../../server/db/schema/runs.js';
import { createLab, type Lab } from './lab-fixture.js';
import { signInAs, type SignedIn } from './sign-in-as.js';
import { startTestApp, type TestApp } from './test-app.js';
import { smallRectangle, smallWindow } from './fixtures/small-cavity.js';

let app: TestApp;
let lab: Lab;
let designer: SignedIn;
let colleague: SignedIn;
let viewer: SignedIn;

beforeAll(async () => {
  app = await startTestApp({
    env: {
      POLEWARD_RUNS_PER_USER: '2',
      POLEWARD_RUNS_PER_GROUP: '3',
      POLEWARD_RUN_MAX_SECONDS: '3600',
      POLEWARD_COMPUTE_THREADS: '1',
      // 100,000-site estimates take seconds idle, minutes on a loaded 2-core machine.
      POLEWARD_COMPUTE_TIMEOUT_SECONDS: '600',
    },
  });
  lab = await createLab(app.handle.db, ['designer', 'designer', 'viewer']);
  designer = await signInAs(app, lab.members[0].email);
  colleague = await signInAs(app, lab.members[1].email);
  viewer = await signInAs(app, lab.as('viewer').email);
});
afterAll(async () => app?.close());

const models = () => `/api/groups/${lab.groupId}/models`;
const runsUrl = () => `/api/groups/${lab.groupId}/runs`;

async function modelCount() {
  const [{ n }] = await app.handle.db.select({ n: count() }).from(cavityModels).where(eq(cavityModels.groupId, lab.groupId));
  return n;
}
async function runCount() {
  const [{ n }] = await app.handle.db.select({ n: count() }).from(runs).where(eq(runs.groupId, lab.groupId));
  return n;
}

/** A 400×250 rectangle at 5 nm: 100,000 sites, the largest cavity a model may have. */
const largest = () =>
  smallRectangle('Largest rectangle', {
    grid: { nx: 400, ny: 250 },
    shape: { kind: 'rectangle', x0: 0, y0: 0, width: 2000, height: 1250 },
    leads: [
      { side: 'left', start: 100, width: 20 },
      { side: 'right', start: 120, width: 20 },
    ],
  });

describe('model documents are capped before geometry work (defects 2 and 6)', () => {
  it('a viewer validating a 20,000-vertex polygon gets a 400 naming the vertices and the limit', async () => {
    const vertices = Array.from({ length: 20_000 }, (_, k) => [
      1250 + 1200 * Math.cos((2 * Math.PI * k) / 20_000),
      1250 + 1200 * Math.sin((2 * Math.PI * k) / 20_000),
    ]);
    const res = await viewer.post(`${models()}/validate`, {
      document: smallRectangle('Polygon', { grid: { nx: 500, ny: 500 }, shape: { kind: 'polygon', vertices }, leads: [] }),
    });
    expect(res.status).toBe(400);
    expect(res.body.issues[0].path).toBe('document.shape.vertices');
    expect(res.body.message).toMatch(/20000 vertices, above the limit of 4096/);
  });

  it('a union nested 1,000 deep answers 400 with the depth limit, on validate, create and edit, storing nothing', async () => {
    let shape: unknown = { kind: 'rectangle', x0: 0, y0: 0, width: 150, height: 100 };
    for (let k = 0; k < 1000; k++) shape = { kind: 'union', of: [shape] };
    const document = smallRectangle('Deep', { shape });
    const before = await modelCount();
    const checked = await viewer.post(`${models()}/validate`, { document });
    expect(checked.status).toBe(400);
    expect(checked.body.message).toMatch(/nested more than 16 levels/);
    expect(checked.body.issues[0].path).toMatch(/^document\.shape\.of\.0\.of\.0/);
    const created = await designer.post(models(), { document });
    expect(created.status).toBe(400);
    const ok = await designer.post(models(), { document: smallRectangle('Shallow') });
    expect(ok.status).toBe(201);
    const edited = await designer.agent.put(`${models()}/${ok.body.id}`).set('X-CSRF-Token', designer.csrf).send({ document });
    expect(edited.status).toBe(400);
    expect(await modelCount()).toBe(before + 1);
    expect((await designer.get(`${models()}/${ok.body.id}`)).body.latestVersion).toBe(1);
  });

  it('the event loop keeps answering health checks while heavy requests compute', async () => {
    const model = await designer.post(models(), { document: largest() });
    expect(model.status).toBe(201);
    // The estimate of a 100,000-site run analyses its sparsity pattern (seconds of CPU);
    // two of them at once held the event loop for seconds before the pool.
    const window = { emin: 1, emax: 1.5, gammaMax: 0.2 };
    const delay = monitorEventLoopDelay({ resolution: 10 });
    const healthTimes: number[] = [];
    let heavyDone = false;
    const heavy = Promise.all([0, 1].map(() => designer.post(`${runsUrl()}/estimate`, { kind: 'pole-search', modelId: model.body.id, window }))).finally(
      () => (heavyDone = true),
    );
    delay.enable();
    while (!heavyDone) {
      const t0 = performance.now();
      const h = await request(app.server).get('/api/health');
      healthTimes.push(performance.now() - t0);
      expect(h.status).toBe(200);
      await new Promise((r) => setTimeout(r, 50));
    }
    delay.disable();
    const answers = await heavy;
    for (const a of answers) expect(a.status).toBe(200);
    // Each estimate took seconds of CPU (in a compute thread), yet the loop was never held
    // for long. The 100 ms target is met with room on an idle machine; the bound asserted
    // is 1 s, because this test shares 2 cores with PostgreSQL, vitest and the compute
    // thread, where scheduling alone delays a timer by a few hundred ms. Blocking the loop
    // with even one of these estimates would exceed it.
    expect(healthTimes.length).toBeGreaterThan(1);
    expect(delay.max / 1e6).toBeLessThan(1000);
    expect(Math.max(...healthTimes)).toBeLessThan(1000);
  }, 300_000);
});

/** A real PNG declaring width×height 1-bit grey pixels, all zero: tiny on disk, huge decoded. */
function pngBomb(width: number, height: number): Buffer {
  const crcTable = Array.from({ length: 256 }, (_, n) => {
    let c = n;
    for (let k = 0; k < 8; k++) c = c & 1 ? 0xedb88320 ^ (c >>> 1) : c >>> 1;
    return c >>> 0;
  });
  const crc = (buf: Buffer) => {
    let c = 0xffffffff;
    for (const b of buf) c = crcTable[(c ^ b) & 0xff] ^ (c >>> 8);
    return (c ^ 0xffffffff) >>> 0;
  };
  const chunk = (type: string, data: Buffer) => {
    const len = Buffer.alloc(4);
    len.writeUInt32BE(data.length);
    const body = Buffer.concat([Buffer.from(type, 'ascii'), data]);
    const sum = Buffer.alloc(4);
    sum.writeUInt32BE(crc(body));
    return Buffer.concat([len, body, sum]);
  };
  const ihdr = Buffer.alloc(13);
  ihdr.writeUInt32BE(width, 0);
  ihdr.writeUInt32BE(height, 4);
  ihdr[8] = 1; // bit depth
  ihdr[9] = 0; // greyscale
  const raw = Buffer.alloc(height * (1 + Math.ceil(width / 8))); // filter byte 0 + zero pixels per row
  return Buffer.concat([
    Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]),
    chunk('IHDR', ihdr),
    chunk('IDAT', deflateSync(raw, { level: 9 })),
    chunk('IEND', Buffer.alloc(0)),
  ]);
}

describe('drawings and uploads (defects 3 and 7)', () => {
  const url = () => `${models()}/mask-from-bitmap`;
  const post = () => designer.agent.post(url()).set('X-CSRF-Token', designer.csrf).field('spacingNm', '5').field('widthNm', '400');

  it('a 20000×20000 PNG bomb is refused with 413 from its header, before decoding', async () => {
    const bomb = pngBomb(20_000, 20_000);
    expect(bomb.length).toBeLessThan(200_000);
    const res = await post().attach('file', bomb, 'bomb.png');
    expect(res.status).toBe(413);
    expect(res.body.message).toMatch(/20000×20000 pixels; at most 4096×4096/);
    expect(res.body.issues[0].path).toBe('file');
  });

  it('a file too large is 413, a wrong field or two files 400, not a PNG 415, each with the reason', async () => {
    const big = await post().attach('file', Buffer.alloc(9 * 1024 * 1024, 1), 'big.png');
    expect(big.status).toBe(413);
    expect(big.body.message).toMatch(/larger than 8 MiB/);
    const wrongField = await post().attach('drawing', pngBomb(10, 10), 'a.png');
    expect(wrongField.status).toBe(400);
    expect(wrongField.body.message).toMatch(/field "drawing"; send the drawing in the field "file"/);
    const two = await post().attach('file', pngBomb(10, 10), 'a.png').attach('file', pngBomb(10, 10), 'b.png');
    expect(two.status).toBe(400);
    expect(two.body.message).toMatch(/one drawing at a time|only one file/);
    const text = await post().attach('file', Buffer.from('not an image at all, just text'), 'a.png');
    expect(text.status).toBe(415);
    expect(text.body.code).toBe('unsupported_media_type');
    const broken = await designer.agent
      .post(url())
      .set('X-CSRF-Token', designer.csrf)
      .set('Content-Type', 'multipart/form-data; boundary=xyz')
      .send('--xyz\r\nContent-Disposition: form-data; name="file"; filename="a.png"\r\n\r\nabc');
    expect(broken.status).toBeGreaterThanOrEqual(400);
    expect(broken.status).toBeLessThan(500);
  });
});

describe('run estimate and run limits (defect 4)', () => {
  let smallId: string;
  let largeId: string;
  beforeAll(async () => {
    smallId = (await designer.post(models(), { document: smallRectangle('Limits small') })).body.id;
    largeId = (await designer.post(models(), { document: largest() })).body.id;
  });

  it('identical requests get identical estimates, from the cost model', async () => {
    const body = { kind: 'pole-search', modelId: smallId, window: smallWindow };
    const a = await designer.post(`${runsUrl()}/estimate`, body);
    const b = await designer.post(`${runsUrl()}/estimate`, body);
    expect(a.status).toBe(200);
    expect(a.body.method.kind).toBe('cost-model');
    // Determinism, not physics: the same inputs must give the very same number.
    expect(b.body.expectedSeconds).toBe(a.body.expectedSeconds);
    expect(b.body.factorisations).toBe(a.body.factorisations);
    expect(a.body.expectedSeconds).toBeGreaterThan(0);
  });

  it('a run estimated above the limit is refused with what to shrink, and nothing is stored', async () => {
    const before = await runCount();
    const tooLarge = { kind: 'pole-search', modelId: largeId, window: { emin: 0.5, emax: 60, gammaMax: 5 } };
    const estimate = await designer.post(`${runsUrl()}/estimate`, tooLarge);
    expect(estimate.status).toBe(200);
    expect(estimate.body.withinLimit).toBe(false);
    expect(estimate.body.warnings[0]).toMatch(/^Launching this run will be refused/);
    const res = await designer.post(runsUrl(), tooLarge);
    expect(res.status).toBe(422);
    expect(res.body.code).toBe('run_too_large');
    expect(res.body.message).toMatch(/above this server's limit of 60 min/);
    expect(res.body.message).toMatch(/narrower window/);
    expect(res.body.message).toMatch(/Γmax/);
    expect(res.body.message).toMatch(/fewer sites \(now 100000/);
    expect(await runCount()).toBe(before);
  }, 300_000);

  it('queued and running runs are limited per person and per group, with 429 and Retry-After', async () => {
    const launch = (who: SignedIn) => who.post(runsUrl(), { kind: 'pole-search', modelId: smallId, window: smallWindow });
    expect((await launch(designer)).status).toBe(201);
    expect((await launch(designer)).status).toBe(201);
    const before = await runCount();
    const third = await launch(designer);
    expect(third.status).toBe(429);
    expect(Number(third.headers['retry-after'])).toBeGreaterThanOrEqual(1);
    expect(third.body.message).toMatch(/You already have 2 runs queued or running.*Try again in about/);
    expect(await runCount()).toBe(before);

    expect((await launch(colleague)).status).toBe(201);
    const groupFull = await launch(colleague);
    expect(groupFull.status).toBe(429);
    expect(groupFull.body.message).toMatch(/This group already has 3 runs queued or running/);

    // A run that finished frees its slot.
    await app.handle.db.update(runs).set({ status: 'completed' }).where(eq(runs.createdBy, lab.members[0].id));
    expect((await launch(designer)).status).toBe(201);
  });
});
