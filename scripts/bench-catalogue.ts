// Catalogue search latency with 100,000 resonances in one group (plus 20,000 in a second).
//   npx tsx scripts/bench-catalogue.ts
// Builds its own database (POLEWARD_BENCH_DB, default poleward_bench; dropped and recreated) on the project's
// PostgreSQL, fills it with synthetic but plausible resonances, serves the real app on a
// loopback port and loads it with autocannon. Prints figures; asserts nothing.
import { randomBytes } from 'node:crypto';
import { availableParallelism, loadavg } from 'node:os';
import type { AddressInfo } from 'node:net';
import { fileURLToPath } from 'node:url';
import { execFile } from 'node:child_process';
import { dirname, join } from 'node:path';
import { sql } from 'drizzle-orm';
import { createApp } from '../server/app.js';
import { hashPassword } from '../server/auth/password.js';
import { catalogueConditions, catalogueOrder, toCatalogueFilter, catalogueFilterSchema } from '../server/catalogue/catalogue-query.js';
import { loadConfig } from '../server/config.js';
import { connectDb, type Db } from '../server/db/client.js';
import { resonances } from '../server/db/schema/catalogue.js';
import { memberships, researchGroups } from '../server/db/schema/groups.js';
import { cavityModels, modelVersions } from '../server/db/schema/models.js';
import { runs } from '../server/db/schema/runs.js';
import { users } from '../server/db/schema/users.js';
import { ensureDatabase } from './db.js';
import { migrate } from './migrate.js';

/** ħ in meV·ps (CODATA 2018, as in docs/physics-model.md): τ = ħ/Γ. */
const HBAR_MEV_PS = 0.6582119569;
const MAIN_ROWS = 100_000;
const OTHER_ROWS = 20_000;
const POLES_PER_RUN = 200;
const BATCH = 1000;
const password = 'bench-password-1';

const families = [
  { family: 'rectangle', dims: () => ({ widthNm: pick([200, 300, 400, 600]), heightNm: pick([150, 250, 400]) }) },
  { family: 'disk', dims: () => ({ radiusNm: pick([100, 150, 250, 400]) }) },
  { family: 'ellipse', dims: () => ({ widthNm: pick([300, 500]), heightNm: pick([200, 350]) }) },
  { family: 'stadium', dims: () => ({ lengthNm: pick([200, 400, 600]), radiusNm: pick([100, 200]) }) },
  { family: 'annulus', dims: () => ({ radiusNm: pick([200, 300]), widthNm: pick([60, 100]) }) },
  { family: 'polygon', dims: () => ({ widthNm: pick([250, 450]), heightNm: pick([250, 450]) }) },
];
const materials = ['GaAs', 'InAs', 'InSb', 'Si'];
const tagWords = ['candidate', 'fabricate', 'check width', 'high-q', 'bic', 'reviewed', 'symmetric', 'edge mode'];
const noteWords = ['whispering', 'gallery', 'bouncing', 'ball', 'scar', 'doublet', 'split', 'by', 'field', 'near', 'threshold', 'lead', 'coupling', 'weak', 'strong'];
const nameWords = ['harrow', 'quarry', 'billiard', 'dot', 'ring', 'stadium', 'bowtie', 'notch', 'wide', 'narrow', 'tapered'];

let seed = 0x2545f491;
/** xorshift32: a fixed sequence, so two bench runs see the same data. */
function random(): number {
  seed ^= seed << 13;
  seed ^= seed >>> 17;
  seed ^= seed << 5;
  return (seed >>> 0) / 4294967296;
}
function pick<T>(items: readonly T[]): T {
  return items[Math.floor(random() * items.length)]!;
}
function words(list: readonly string[], n: number): string {
  return Array.from({ length: n }, () => pick(list)).join(' ');
}

async function insertParents(db: Db, groupId: string, userId: string, rows: number, label: string) {
  const models: { id: string; name: string; family: string; material: string; fieldT: number; spacingNm: number; dims: Record<string, number>; versionId: string; version: number }[] = [];
  const modelCount = Math.max(4, Math.round(rows / 2500));
  for (let m = 0; m < modelCount; m++) {
    const fam = families[m % families.length]!;
    const name = `${label} ${words(nameWords, 2)} ${fam.family} ${m}`;
    const [model] = await db.insert(cavityModels).values({ groupId, name, createdBy: userId }).returning({ id: cavityModels.id });
    const dims = fam.dims();
    const material = pick(materials);
    const fieldT = pick([0, 0, 0.1, 0.5, 1, 2]);
    const spacingNm = pick([2, 4, 5]);
    const document = {
      name,
      spacing: spacingNm,
      material,
      grid: { nx: 80, ny: 60 },
      shape: { kind: fam.family },
      field: fieldT,
      leads: [
        { side: 'left', start: 20, width: 12, offset: 0, name: 'source' },
        { side: 'right', start: 24, width: 12, offset: 0 },
      ],
    };
    const [version] = await db
      .insert(modelVersions)
      .values({
        modelId: model!.id,
        groupId,
        version: 1,
        document,
        family: fam.family,
        material,
        effectiveMass: 0.067,
        spacingNm,
        fieldT,
        siteCount: 4000,
        leadCount: 2,
        hoppingMeV: 38.09982 / 0.067 / spacingNm ** 2,
        ...dims,
        keyDimensions: Object.fromEntries(Object.entries(dims).map(([k, v]) => [k.replace(/Nm$/, ''), v])),
        createdBy: userId,
      })
      .returning({ id: modelVersions.id });
    models.push({ id: model!.id, name, family: fam.family, material, fieldT, spacingNm, dims, versionId: version!.id, version: 1 });
  }
  return models;
}

async function insertResonances(db: Db, groupId: string, userId: string, total: number, label: string): Promise<void> {
  const models = await insertParents(db, groupId, userId, total, label);
  const now = Date.now();
  let pending: (typeof resonances.$inferInsert)[] = [];
  for (let r = 0; r < total / POLES_PER_RUN; r++) {
    const model = models[r % models.length]!;
    const emin = 0.2 + random() * 20;
    const emax = emin + 5 + random() * 30;
    const [run] = await db
      .insert(runs)
      .values({
        groupId,
        modelVersionId: model.versionId,
        kind: 'pole-search',
        status: 'completed',
        window: { emin, emax, gammaMax: 1 },
        thresholds: [emin + 1.3, emin + 4.1],
        resonanceCount: POLES_PER_RUN,
        createdBy: userId,
      })
      .returning({ id: runs.id });
    for (let k = 0; k < POLES_PER_RUN; k++) {
      const energy = emin + (emax - emin) * random();
      const bound = random() < 0.03;
      // Q spread over 10..1e5, log-uniform, as pole searches of open dots give.
      const width = bound ? 0 : energy / 10 ** (1 + 4 * random());
      const share = random();
      const tagCount = random() < 0.3 ? 1 + Math.floor(random() * 2) : 0;
      pending.push({
        groupId,
        runId: run!.id,
        modelId: model.id,
        modelVersionId: model.versionId,
        idx: k,
        energy,
        width,
        lifetimePs: bound ? null : HBAR_MEV_PS / width,
        quality: bound ? null : energy / width,
        partialWidths: [
          { lead: 'source', width: width * share },
          { lead: 'right1', width: width * (1 - share) },
        ],
        petermann: 1 + -Math.log(1 - random()) * 0.05,
        residual: 10 ** (-12 + 3 * random()),
        bound,
        nearThreshold: random() < 0.05,
        overlapping: random() < 0.1,
        tags: [...new Set(Array.from({ length: tagCount }, () => pick(tagWords)))],
        notes: random() < 0.2 ? words(noteWords, 3 + Math.floor(random() * 5)) : '',
        modelName: model.name,
        modelVersion: model.version,
        family: model.family,
        material: model.material,
        fieldT: model.fieldT,
        spacingNm: model.spacingNm,
        ...model.dims,
        createdAt: new Date(now - random() * 180 * 86_400_000),
      });
      if (pending.length === BATCH) {
        await db.insert(resonances).values(pending);
        pending = [];
      }
    }
  }
  if (pending.length > 0) await db.insert(resonances).values(pending);
}

async function makeGroup(db: Db, slug: string, email: string, passwordHash: string): Promise<{ groupId: string; userId: string }> {
  const [group] = await db.insert(researchGroups).values({ slug, name: `Bench ${slug}` }).returning({ id: researchGroups.id });
  const [user] = await db.insert(users).values({ email, name: `Bench ${slug}`, passwordHash }).returning({ id: users.id });
  await db.insert(memberships).values({ groupId: group!.id, userId: user!.id, role: 'admin' });
  return { groupId: group!.id, userId: user!.id };
}

/** Percentile of sorted samples by nearest rank (common practice, no source). */
function percentile(sorted: number[], p: number): number {
  if (sorted.length === 0) return NaN;
  return sorted[Math.min(sorted.length - 1, Math.max(0, Math.ceil((p / 100) * sorted.length) - 1))]!;
}

/** The typical searches of the catalogue screen (query strings after /catalogue?). */
function typicalSearches(): Record<string, string> {
  return {
    energyWindowByQ: 'emin=5&emax=6&sort=quality&dir=desc&page=1&pageSize=25',
    familyWidthRange: 'family=disk&gmin=0.001&gmax=0.01&sort=energy&dir=asc&page=1&pageSize=25',
    freeText: 'q=whisper%20gall&sort=date&dir=desc&page=1&pageSize=25',
    tag: 'tag=candidate&sort=width&dir=asc&page=1&pageSize=25',
    unfilteredByDate: 'sort=date&dir=desc&page=1&pageSize=25',
    deepPage: 'sort=energy&dir=asc&page=200&pageSize=100',
    highQNotBound: 'qmin=10000&bound=false&sort=quality&dir=desc&pageSize=50',
  };
}

/** EXPLAIN ANALYZE of the page query and the count query behind one search; returns execution times (ms). */
async function explainSearch(db: Db, groupId: string, query: string, show: boolean): Promise<{ page: number; count: number; countOver: number }> {
  const params = Object.fromEntries(new URLSearchParams(query));
  const parsed = catalogueFilterSchema.parse(params);
  const filter = toCatalogueFilter(parsed);
  const pageSize = Number(params.pageSize ?? 25);
  const offset = (Number(params.page ?? 1) - 1) * pageSize;
  const where = catalogueConditions(groupId, filter);
  const order = catalogueOrder(filter.sort, filter.dir);
  const page = db.select({ id: resonances.id, energy: resonances.energy }).from(resonances).where(where).orderBy(...order).limit(pageSize).offset(offset);
  const counted = db.select({ n: sql<number>`count(*)` }).from(resonances).where(where);
  const windowed = db
    .select({ id: resonances.id, n: sql<number>`count(*) over ()` })
    .from(resonances)
    .where(where)
    .orderBy(...order)
    .limit(pageSize)
    .offset(offset);
  const run = async (q: { getSQL(): unknown }, label: string): Promise<number> => {
    const result = await db.execute(sql`explain (analyze, buffers) ${q}`);
    const lines = (result.rows as { 'QUERY PLAN': string }[]).map((r) => r['QUERY PLAN']);
    if (show) console.log(`  -- ${label}\n${lines.filter((l) => !/^\s*Buffers|Planning:|Planning Time/.test(l)).map((l) => `     ${l}`).join('\n')}`);
    const exec = lines.find((l) => l.startsWith('Execution Time'));
    return Number(/([\d.]+) ms/.exec(exec ?? '')?.[1] ?? NaN);
  };
  return { page: await run(page, 'page'), count: await run(counted, 'count(*) with the filter'), countOver: await run(windowed, 'count(*) over () instead') };
}

export async function benchCatalogue(): Promise<Record<string, number>> {
  const figures: Record<string, number> = {};
  // BENCH_REUSE=1 keeps the database of the previous run (the load takes a minute or two).
  const reuse = process.env.BENCH_REUSE === '1';
  // Its own name per checkout, so two benches on one PostgreSQL do not drop each other's data.
  const dbName = process.env.POLEWARD_BENCH_DB ?? 'poleward_bench';
  const server = await ensureDatabase({ databases: [dbName], recreate: !reuse, log: () => {} });
  const url = server.url(dbName);
  await migrate(url);
  const handle = connectDb(url, 10);
  const db = handle.db;
  const [existing] = await db.select({ n: sql<number>`count(*)::int` }).from(researchGroups);
  const config = loadConfig({ ...process.env, NODE_ENV: 'test', DATABASE_URL: url, POLEWARD_JWT_SECRET: randomBytes(32).toString('hex') });
  let listener: import('node:http').Server | undefined;
  try {
    let t0 = performance.now();
    let main: { groupId: string; userId: string };
    if (reuse && existing!.n > 0) {
      const [row] = await db.select({ groupId: researchGroups.id }).from(researchGroups).where(sql`${researchGroups.slug} = 'bench-main'`);
      main = { groupId: row!.groupId, userId: '' };
      console.log('[bench] reusing the resonances of the previous run (BENCH_REUSE=1)');
    } else {
      const passwordHash = await hashPassword(password, 4);
      main = await makeGroup(db, 'bench-main', 'bench.main@bench.example', passwordHash);
      const other = await makeGroup(db, 'bench-other', 'bench.other@bench.example', passwordHash);
      await insertResonances(db, main.groupId, main.userId, MAIN_ROWS, 'main');
      await insertResonances(db, other.groupId, other.userId, OTHER_ROWS, 'other');
      figures.insert_s = (performance.now() - t0) / 1000;
      console.log(`[bench] inserted ${MAIN_ROWS} + ${OTHER_ROWS} resonances in ${figures.insert_s.toFixed(1)} s`);
    }
    // As autovacuum would soon after a bulk load; without statistics the plans are guesses.
    await db.execute(sql`vacuum analyze resonances`);

    console.log('[bench] EXPLAIN ANALYZE (execution times in ms: page query / count with the same filter / count(*) over () variant):');
    for (const [name, query] of Object.entries(typicalSearches())) {
      const ms = await explainSearch(db, main.groupId, query, process.env.BENCH_PLANS === '1');
      figures[`explain_${name}_page_ms`] = ms.page;
      figures[`explain_${name}_count_ms`] = ms.count;
      figures[`explain_${name}_count_over_ms`] = ms.countOver;
      console.log(`  ${name.padEnd(18)} ${ms.page.toFixed(2).padStart(8)} ${ms.count.toFixed(2).padStart(8)} ${ms.countOver.toFixed(2).padStart(8)}   ?${query}`);
    }

    if (process.env.BENCH_ONLY_EXPLAIN === '1') return figures;
    const app = createApp({
      db,
      config,
      mailer: { send: async () => {}, close: () => {} },
      // Searches queue nothing; a queue that refuses makes any accidental use visible.
      queue: { enqueue: () => Promise.reject(new Error('the bench queues no runs')), cancel: async () => {} },
      passwordCost: 4,
    });
    listener = await new Promise((resolve) => {
      const s = app.listen(0, '127.0.0.1', () => resolve(s));
    });
    const base = `http://127.0.0.1:${(listener!.address() as AddressInfo).port}`;
    const signIn = await fetch(`${base}/api/auth/sign-in`, {
      method: 'POST',
      headers: { 'content-type': 'application/json' },
      body: JSON.stringify({ email: 'bench.main@bench.example', password }),
    });
    if (!signIn.ok) throw new Error(`bench sign-in failed: ${signIn.status} ${await signIn.text()}`);
    const cookie = signIn.headers
      .getSetCookie()
      .map((c) => c.split(';')[0])
      .join('; ');
    const paths = Object.entries(typicalSearches()).map(([name, q]) => ({ name, path: `/api/groups/${main.groupId}/catalogue?${q}` }));

    console.log('[bench] one client, 40 requests per search (ms: p50 / p95 / max; total matches):');
    for (const { name, path } of paths) {
      const times: number[] = [];
      let total = 0;
      for (let i = 0; i < 40; i++) {
        const t = performance.now();
        const res = await fetch(base + path, { headers: { cookie } });
        const body = (await res.json()) as { total: number };
        if (!res.ok) throw new Error(`${name}: HTTP ${res.status} ${JSON.stringify(body)}`);
        total = body.total;
        if (i >= 5) times.push(performance.now() - t); // the first few warm the pool and caches
      }
      times.sort((a, b) => a - b);
      figures[`single_${name}_p50_ms`] = percentile(times, 50);
      figures[`single_${name}_p95_ms`] = percentile(times, 95);
      console.log(
        `  ${name.padEnd(18)} ${percentile(times, 50).toFixed(1).padStart(6)} ${percentile(times, 95).toFixed(1).padStart(6)} ${times.at(-1)!.toFixed(1).padStart(6)}   total ${total}`,
      );
    }

    // The load generator runs in a child process: in this one it would take the server's event loop.
    const load = await new Promise<{ rps: number; requests: number; non2xx: number; p50: number; p95: number; p99: number; duration: number }>(
      (resolve, reject) => {
        const options = {
          url: base,
          connections: 20,
          duration: Number(process.env.BENCH_SECONDS ?? 10),
          headers: { cookie },
          requests: paths.map((p) => ({ method: 'GET', path: p.path })),
        };
        execFile(process.execPath, [join(dirname(fileURLToPath(import.meta.url)), 'load-client.mjs'), JSON.stringify(options)], { maxBuffer: 1 << 20 }, (err, stdout) =>
          err ? reject(err) : resolve(JSON.parse(stdout.trim().split('\n').pop()!)),
        );
      },
    );
    // Other work on the machine shows up in every figure: print how busy it was.
    figures.machine_loadavg_1min = loadavg()[0]!;
    figures.load_connections = 20;
    figures.load_requests = load.requests;
    figures.load_non2xx = load.non2xx;
    figures.load_rps = load.rps;
    figures.load_p50_ms = load.p50;
    figures.load_p95_ms = load.p95;
    figures.load_p99_ms = load.p99;
    console.log(
      `[bench] autocannon, 20 connections, ${load.duration.toFixed(0)} s, mix of ${paths.length} searches: ` +
        `${figures.load_rps.toFixed(0)} req/s, p50 ${figures.load_p50_ms.toFixed(1)} ms, p95 ${figures.load_p95_ms.toFixed(1)} ms, ` +
        `p99 ${figures.load_p99_ms.toFixed(1)} ms (${load.requests} requests, ${load.non2xx} not 2xx; machine load average ${figures.machine_loadavg_1min.toFixed(1)} on ${availableParallelism()} cores)`,
    );

    // The whole group as one CSV download: time, size, and how far the process memory grew.
    if (process.env.BENCH_SKIP_EXPORT === '1') return figures;
    const rssBefore = process.memoryUsage().rss;
    let rssPeak = rssBefore;
    const sampler = setInterval(() => (rssPeak = Math.max(rssPeak, process.memoryUsage().rss)), 20);
    t0 = performance.now();
    const csv = await fetch(`${base}/api/groups/${main.groupId}/catalogue/export.csv`, { headers: { cookie } });
    let bytes = 0;
    let lines = 0;
    for await (const chunk of csv.body as unknown as AsyncIterable<Uint8Array>) {
      bytes += chunk.length;
      for (const b of chunk) if (b === 10) lines++;
    }
    clearInterval(sampler);
    figures.export_csv_s = (performance.now() - t0) / 1000;
    figures.export_csv_mb = bytes / 1e6;
    figures.export_csv_lines = lines;
    figures.export_rss_growth_mb = (rssPeak - rssBefore) / 1e6;
    console.log(
      `[bench] CSV export of the whole group: ${lines} lines, ${figures.export_csv_mb.toFixed(1)} MB in ${figures.export_csv_s.toFixed(2)} s; ` +
        `process RSS grew by at most ${figures.export_rss_growth_mb.toFixed(0)} MB (server and client in one process)`,
    );
    return figures;
  } finally {
    await new Promise<void>((resolve) => (listener ? listener.close(() => resolve()) : resolve()));
    await handle.close();
  }
}

if (process.argv[1] && fileURLToPath(import.meta.url) === process.argv[1]) {
  const figures = await benchCatalogue();
  console.log(JSON.stringify(figures, null, 2));
}
