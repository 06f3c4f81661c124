// Catalogue search latency with 100,000 resonances in one group (plus 20,000 in a second).
//   npx tsx scripts/bench-catalogue.ts
// Builds its own database (POLEWARD_BENCH_DB, default poleward_bench; dropped and recreated) on the project's
// PostgreSQL, fills it with synthetic but plausible resonances, serves the real app on a
// loopback port and loads it with autocannon. Prints figures; asserts nothing.
import { randomBytes } from 'node:crypto';
import { readFileSync, rmSync, writeFileSync } from 'node:fs';
import { availableParallelism, loadavg, tmpdir } from 'node:os';
import type { AddressInfo } from 'node:net';
import { fileURLToPath } from 'node:url';
import { execFile } from 'node:child_process';
import { dirname, join } from 'node:path';
import { sql } from 'drizzle-orm';
import { createApp } from '../server/app.js';
import { hashPassword } from '../server/auth/password.js';
import { decodeCursor, encodeCursor, type CursorPosition } from '../server/catalogue/catalogue-cursor.js';
import { catalogueQuerySchema, toCataloguePageRequest, type CataloguePageRequest } from '../server/catalogue/catalogue-query.js';
import { countQuery, estimateResonances, pageQuery } from '../server/catalogue/catalogue-repository.js';
import { loadConfig } from '../server/config.js';
import { connectDb, type Db } from '../server/db/client.js';
import { answerCheckMode } from '../server/http/answer-check.js';
import { researchGroups } from '../server/db/schema/groups.js';
import { ensureDatabase } from './db.js';
import { migrate } from './migrate.js';
import { insertResonances, makeGroup } from './synthetic-catalogue.js';

const MAIN_ROWS = 100_000;
const OTHER_ROWS = 20_000;
const password = 'bench-password-1';

/** Percentile of sorted samples by nearest rank (common practice, no source). */
function percentile(sorted: number[], p: number): number {
  if (sorted.length === 0) return NaN;
  return sorted[Math.min(sorted.length - 1, Math.max(0, Math.ceil((p / 100) * sorted.length) - 1))]!;
}

/** The typical searches of the catalogue screen (query strings after /catalogue?), first pages. */
function typicalSearches(): Record<string, string> {
  return {
    energyWindowByQ: 'emin=5&emax=6&sort=quality&dir=desc&pageSize=25',
    familyWidthRange: 'family=disk&gmin=0.001&gmax=0.01&sort=energy&dir=asc&pageSize=25',
    freeText: 'q=whisper%20gall&sort=date&dir=desc&pageSize=25',
    tag: 'tag=candidate&sort=width&dir=asc&pageSize=25',
    unfilteredByDate: 'sort=date&dir=desc&pageSize=25',
    highQNotBound: 'qmin=10000&bound=false&sort=quality&dir=desc&pageSize=50',
  };
}
/** The deep page: rows 19,901–20,000 by energy, reached by cursor (was page=200&pageSize=100 by offset). */
const deepSearch = 'sort=energy&dir=asc&pageSize=100';
const deepPageNumber = 200;

function requestOf(query: string): CataloguePageRequest {
  const parsed = catalogueQuerySchema.parse(Object.fromEntries(new URLSearchParams(query)));
  return toCataloguePageRequest(parsed);
}

/** EXPLAIN ANALYZE execution time (ms) of a query; the plan printed when BENCH_PLANS=1. */
async function explainMs(db: Db, q: { getSQL(): unknown }, label: string): Promise<number> {
  const result = await db.execute(sql`explain (analyze, buffers) ${q}`);
  const lines = (result.rows as { 'QUERY PLAN': string }[]).map((r) => r['QUERY PLAN']);
  if (process.env.BENCH_PLANS === '1')
    console.log(
      `  -- ${label}\n${lines
        .filter((l) => !/^\s*Buffers|Planning:|Planning Time/.test(l))
        .map((l) => `     ${l}`)
        .join('\n')}`,
    );
  return Number(/([\d.]+) ms/.exec(lines.find((l) => l.startsWith('Execution Time')) ?? '')?.[1] ?? NaN);
}

/** Page query, planner estimate (round trip) and a full count behind one search. */
async function explainSearch(db: Db, groupId: string, req: CataloguePageRequest, at: { offset: number } | { cursor: CursorPosition }, label: string) {
  const page = await explainMs(db, pageQuery(db, groupId, req, at, req.pageSize + 1), `${label}: page`);
  const t = performance.now();
  await estimateResonances(db, groupId, req);
  const estimate = performance.now() - t;
  const count = await explainMs(db, countQuery(db, groupId, req), `${label}: full count`);
  return { page, estimate, count };
}

/**
 * CPU time (ms) the database's backends of this bench have used so far, from /proc (Linux):
 * utime + stime of every backend connected to the bench database. Only this bench uses it.
 */
async function databaseCpuMs(db: Db, dbName: string): Promise<number> {
  const result = await db.execute(sql`select pid from pg_stat_activity where datname = ${dbName}`);
  const tick = 1000 / 100; // USER_HZ is 100 on Linux (common practice, no source)
  let ms = 0;
  for (const { pid } of result.rows as { pid: number }[]) {
    try {
      const stat = readFileSync(`/proc/${pid}/stat`, 'utf8');
      const fields = stat.slice(stat.lastIndexOf(')') + 2).split(' ');
      ms += (Number(fields[11]) + Number(fields[12])) * tick; // fields 14 and 15 of proc(5): utime, stime
    } catch {
      // Not Linux, or the backend ended: left out.
    }
  }
  return ms;
}

/** Waits until no pool client is busy (requests the load generator abandoned still finish), at most 10 s. */
async function drain(pool: { totalCount: number; idleCount: number; waitingCount: number }): Promise<void> {
  for (let i = 0; i < 200 && (pool.waitingCount > 0 || pool.idleCount < pool.totalCount); i++) await new Promise((r) => setTimeout(r, 50));
}

/** xorshift32 (the bench's own fixed sequence, common practice, no source). */
function sequence(seedValue: number): () => number {
  let x = seedValue;
  return () => {
    x ^= x << 13;
    x ^= x >>> 17;
    x ^= x << 5;
    return (x >>> 0) / 4294967296;
  };
}

/**
 * `count` catalogue searches of the seven kinds of typicalSearches() and the deep page, in turn
 * (the same proportions as the repeated mix), each with its own values: energy windows, width and
 * Q bounds, words (prefixes of words the synthetic notes and names use), tags and cursors at random
 * rows of the group, so no two are the same. Paths as autocannon requests them.
 */
async function distinctSearches(db: Db, groupId: string, catalogue: string, count: number): Promise<string[]> {
  const random = sequence(0x6a09e667);
  const pick = <T>(items: readonly T[]): T => items[Math.floor(random() * items.length)]!;
  const rows = (
    await db.execute(
      sql`select created_at::text as created, energy, id from resonances where group_id = ${groupId} order by md5(id::text) limit ${Math.ceil(count / 7) + 10}`,
    )
  ).rows as { created: string; energy: number; id: string }[];
  const words = [
    'whispering',
    'gallery',
    'bouncing',
    'ball',
    'doublet',
    'threshold',
    'coupling',
    'harrow',
    'quarry',
    'billiard',
    'stadium',
    'bowtie',
    'notch',
    'tapered',
  ];
  const tags = ['candidate', 'fabricate', 'high-q', 'bic', 'reviewed', 'symmetric'];
  const families = ['rectangle', 'disk', 'ellipse', 'stadium', 'annulus', 'polygon'];
  const prefix = (w: string) => w.slice(0, 3 + Math.floor(random() * (w.length - 2)));
  const seen = new Set<string>();
  const out: string[] = [];
  for (let i = 0; out.length < count && i < count * 2; i++) {
    let q: string;
    switch (i % 7) {
      case 0: {
        const emin = 0.5 + random() * 30;
        q = `emin=${emin.toFixed(4)}&emax=${(emin + 0.5 + random()).toFixed(4)}&sort=quality&dir=desc&pageSize=25`;
        break;
      }
      case 1: {
        const gmin = 10 ** (-3.5 + random() * 1.5);
        q = `family=${pick(families)}&gmin=${gmin.toPrecision(4)}&gmax=${(gmin * (3 + random() * 20)).toPrecision(4)}&sort=energy&dir=asc&pageSize=25`;
        break;
      }
      case 2:
        q = `q=${encodeURIComponent(random() < 0.5 ? prefix(pick(words)) : `${prefix(pick(words))} ${prefix(pick(words))}`)}&emin=${(random() * 20).toFixed(3)}&sort=date&dir=desc&pageSize=25`;
        break;
      case 3:
        q = `tag=${encodeURIComponent(pick(tags))}&emax=${(5 + random() * 40).toFixed(4)}&sort=width&dir=asc&pageSize=25`;
        break;
      case 4: {
        const r = rows[Math.floor(i / 7) % rows.length]!;
        const req = requestOf('sort=date&dir=desc&pageSize=25');
        q = `sort=date&dir=desc&pageSize=25&cursor=${encodeCursor(req, { toward: 'after', key: [r.created, String(r.energy), r.id], page: 2 })}`;
        break;
      }
      case 5:
        q = `qmin=${(10 ** (2.5 + random() * 2)).toPrecision(5)}&bound=false&sort=quality&dir=desc&pageSize=50`;
        break;
      default: {
        const r = rows[(Math.floor(i / 7) + 5) % rows.length]!;
        const req = requestOf(deepSearch);
        q = `${deepSearch}&cursor=${encodeCursor(req, { toward: 'after', key: [String(r.energy), r.id], page: 2 })}`;
      }
    }
    if (!seen.has(q)) {
      seen.add(q);
      out.push(`${catalogue}?${q}`);
    }
  }
  return out;
}

export async function benchCatalogue(): Promise<Record<string, number>> {
  const figures: Record<string, number> = {};
  // The bench serves answers as production does: their schema check on a sample (server/http/answer-check.ts).
  process.env.POLEWARD_ANSWER_CHECK ??= 'sample';
  console.log(
    `[bench] catalogue: machine load average ${loadavg()
      .map((x) => x.toFixed(1))
      .join(' ')} on ${availableParallelism()} cores before the run`,
  );
  // BENCH_REUSE=1 keeps the database of the previous run (the load takes a minute or two).
  const reuse = process.env.BENCH_REUSE === '1';
  // Its own name per checkout, so two benches on one PostgreSQL do not drop each other's data.
  const dbName = process.env.POLEWARD_BENCH_DB ?? 'poleward_bench';
  const server = await ensureDatabase({ databases: [dbName], recreate: !reuse, log: () => {} });
  const url = server.url(dbName);
  await migrate(url);
  const handle = connectDb(url, 10);
  // Connections stay open: the CPU per answer is read from the backends alive at the end.
  handle.pool.options.idleTimeoutMillis = 0;
  const db = handle.db;
  const [existing] = await db.select({ n: sql<number>`count(*)::int` }).from(researchGroups);
  const config = loadConfig({ ...process.env, NODE_ENV: 'test', DATABASE_URL: url, POLEWARD_JWT_SECRET: randomBytes(32).toString('hex') });
  let listener: import('node:http').Server | undefined;
  try {
    let t0 = performance.now();
    let main: { groupId: string; userId: string };
    if (reuse && existing!.n > 0) {
      const [row] = await db
        .select({ groupId: researchGroups.id })
        .from(researchGroups)
        .where(sql`${researchGroups.slug} = 'bench-main'`);
      main = { groupId: row!.groupId, userId: '' };
      console.log('[bench] reusing the resonances of the previous run (BENCH_REUSE=1)');
    } else {
      const passwordHash = await hashPassword(password, 4);
      main = await makeGroup(db, 'bench-main', 'bench.main@bench.example', passwordHash);
      const other = await makeGroup(db, 'bench-other', 'bench.other@bench.example', passwordHash);
      await insertResonances(db, main.groupId, main.userId, MAIN_ROWS, 'main', 0x2545f491);
      await insertResonances(db, other.groupId, other.userId, OTHER_ROWS, 'other', 0x1b873593);
      figures.insert_s = (performance.now() - t0) / 1000;
      console.log(`[bench] inserted ${MAIN_ROWS} + ${OTHER_ROWS} resonances in ${figures.insert_s.toFixed(1)} s`);
    }
    // As autovacuum would soon after a bulk load; without statistics the plans are guesses.
    await db.execute(sql`vacuum analyze resonances`);

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
    const catalogue = `/api/groups/${main.groupId}/catalogue`;
    const get = async (query: string) => {
      const res = await fetch(`${base}${catalogue}?${query}`, { headers: { cookie } });
      const body = (await res.json()) as { total: number; totalKind: string; countAgeSeconds: number | null; nextCursor: string | null; items: unknown[] };
      if (!res.ok) throw new Error(`${query}: HTTP ${res.status} ${JSON.stringify(body)}`);
      return body;
    };

    // Walk to the deep page the way the table does: next, next, next…
    t0 = performance.now();
    let cursor: string | null = null;
    for (let p = 1; p < deepPageNumber; p++) {
      const body = await get(cursor ? `${deepSearch}&cursor=${cursor}` : deepSearch);
      cursor = body.nextCursor;
      if (!cursor) throw new Error(`the deep walk ended at page ${p}`);
    }
    figures.deep_walk_ms_per_page = (performance.now() - t0) / (deepPageNumber - 1);
    const deepQuery = `${deepSearch}&cursor=${cursor}`;
    const searches: Record<string, string> = { ...typicalSearches(), deepPageByCursor: deepQuery };

    console.log('[bench] EXPLAIN ANALYZE (ms: page query / planner estimate, round trip / a full count, which answers no longer run unless count=exact):');
    for (const [name, query] of Object.entries(searches)) {
      const req = requestOf(query);
      const at = req.cursor ? { cursor: decodeCursor(req.cursor, req) } : { offset: 0 };
      const ms = await explainSearch(db, main.groupId, req, at, name);
      figures[`explain_${name}_page_ms`] = ms.page;
      figures[`explain_${name}_estimate_ms`] = ms.estimate;
      figures[`explain_${name}_count_ms`] = ms.count;
      console.log(
        `  ${name.padEnd(18)} ${ms.page.toFixed(2).padStart(8)} ${ms.estimate.toFixed(2).padStart(8)} ${ms.count.toFixed(2).padStart(8)}   ?${query.slice(0, 70)}`,
      );
    }
    const deepReq = requestOf(deepSearch);
    figures.explain_deepPageByOffset_page_ms = await explainMs(
      db,
      pageQuery(db, main.groupId, deepReq, { offset: (deepPageNumber - 1) * 100 }, 101),
      'deep page by offset',
    );
    console.log(
      `  the same deep page by OFFSET 19,900 (no longer served: numbered pages stop 10,000 rows deep): ${figures.explain_deepPageByOffset_page_ms.toFixed(2)} ms`,
    );
    if (process.env.BENCH_ONLY_EXPLAIN === '1') return figures;

    console.log('[bench] one client, 40 requests per search (ms: p50 / p95 / max; the total as answered):');
    for (const [name, query] of Object.entries(searches)) {
      const times: number[] = [];
      let last: Awaited<ReturnType<typeof get>> | undefined;
      for (let i = 0; i < 40; i++) {
        const t = performance.now();
        last = await get(query);
        if (i >= 5) times.push(performance.now() - t); // the first few warm the pool, the caches and the count
      }
      times.sort((a, b) => a - b);
      figures[`single_${name}_p50_ms`] = percentile(times, 50);
      figures[`single_${name}_p95_ms`] = percentile(times, 95);
      const age = last!.countAgeSeconds === null ? '' : `, counted ${last!.countAgeSeconds} s before`;
      console.log(
        `  ${name.padEnd(18)} ${percentile(times, 50).toFixed(1).padStart(6)} ${percentile(times, 95).toFixed(1).padStart(6)} ${times.at(-1)!.toFixed(1).padStart(6)}   total ${last!.total} (${last!.totalKind}${age})`,
      );
    }
    const exactTimes: number[] = [];
    for (let i = 0; i < 10; i++) {
      const t = performance.now();
      await get(`${typicalSearches().unfilteredByDate}&count=exact`);
      exactTimes.push(performance.now() - t);
    }
    exactTimes.sort((a, b) => a - b);
    figures.single_count_exact_unfiltered_p50_ms = percentile(exactTimes, 50);
    console.log(`  count=exact on the unfiltered 100,000: p50 ${figures.single_count_exact_unfiltered_p50_ms.toFixed(1)} ms (asked for, never by default)`);
    const paths = Object.entries(searches).map(([name, q]) => ({ name, path: `${catalogue}?${q}` }));
    const seconds = Number(process.env.BENCH_SECONDS ?? 10);

    /** One autocannon run (in a child process: in this one it would take the server's event loop), with CPU per answer. */
    const runLoad = async (label: string, prefix: string, requestOptions: Record<string, unknown>, during?: () => () => void) => {
      const cpuBefore = { node: process.cpuUsage(), db: await databaseCpuMs(db, dbName) };
      const stop = during?.();
      const load = await new Promise<{ rps: number; requests: number; non2xx: number; p50: number; p95: number; p99: number; duration: number }>(
        (resolve, reject) => {
          const options = { url: base, connections: 20, duration: seconds, headers: { cookie }, ...requestOptions };
          execFile(
            process.execPath,
            [join(dirname(fileURLToPath(import.meta.url)), 'load-client.mjs'), JSON.stringify(options)],
            { maxBuffer: 1 << 20 },
            (err, stdout) => (err ? reject(err) : resolve(JSON.parse(stdout.trim().split('\n').pop()!))),
          );
        },
      );
      stop?.();
      const nodeCpu = process.cpuUsage(cpuBefore.node);
      const dbCpuMs = (await databaseCpuMs(db, dbName)) - cpuBefore.db;
      // Other work on the machine shows up in every figure: print how busy it was.
      const loadAverage = loadavg()[0]!;
      figures[`${prefix}machine_loadavg_1min`] = loadAverage;
      figures[`${prefix}requests`] = load.requests;
      figures[`${prefix}non2xx`] = load.non2xx;
      figures[`${prefix}rps`] = load.rps;
      figures[`${prefix}p50_ms`] = load.p50;
      figures[`${prefix}p95_ms`] = load.p95;
      figures[`${prefix}p99_ms`] = load.p99;
      // CPU time per answer, which other work on the machine does not inflate the way it inflates latency.
      const requests = Math.max(1, load.requests);
      figures[`${prefix}cpu_ms_per_request_node`] = (nodeCpu.user + nodeCpu.system) / 1000 / requests;
      figures[`${prefix}cpu_ms_per_request_db`] = dbCpuMs / requests;
      console.log(
        `[bench] ${label}: 20 connections, ${load.duration.toFixed(0)} s: ${load.rps.toFixed(0)} req/s, p50 ${load.p50.toFixed(1)} ms, ` +
          `p95 ${load.p95.toFixed(1)} ms, p99 ${load.p99.toFixed(1)} ms (${load.requests} requests, ${load.non2xx} not 2xx; ` +
          `machine load average ${loadAverage.toFixed(1)} on ${availableParallelism()} cores); CPU per answer: API process ` +
          `${figures[`${prefix}cpu_ms_per_request_node`]!.toFixed(2)} ms, PostgreSQL backends ${figures[`${prefix}cpu_ms_per_request_db`]!.toFixed(2)} ms`,
      );
      await drain(handle.pool);
    };

    figures.load_connections = 20;
    figures.answer_check_sampled = answerCheckMode() === 'sample' ? 1 : 0;
    console.log(`[bench] answers checked against their schema: ${answerCheckMode() === 'sample' ? 'a sample (as in production)' : 'every one'}`);
    // BENCH_LOADS picks some of the three loads (default all): repeated,writes,cold.
    const loads = (process.env.BENCH_LOADS ?? 'repeated,writes,cold').split(',');
    // 1. The seven searches over and over: what many people browsing the same pages ask.
    if (loads.includes('repeated'))
      await runLoad(`mix of ${paths.length} searches, repeated`, 'load_', { requests: paths.map((p) => ({ method: 'GET', path: p.path })) });
    // 2. The same, while one resonance of the group is retagged every 500 ms (as a designer or a
    //    run's result writer would): each change drops the group's kept answers and counts.
    const writeEveryMs = 500;
    let writes = 0;
    if (loads.includes('writes'))
      await runLoad(
        `same mix, one write to the group every ${writeEveryMs} ms`,
        'load_writes_',
        { requests: paths.map((p) => ({ method: 'GET', path: p.path })) },
        () => {
          const timer = setInterval(() => {
            writes++;
            void db
              .execute(
                sql`update resonances set notes = ${`bench write ${writes}`} where id = (select id from resonances where group_id = ${main.groupId} order by energy offset ${writes % 1000} limit 1)`,
              )
              .catch(() => {});
          }, writeEveryMs);
          return () => clearInterval(timer);
        },
      );
    figures.load_writes_count = writes;
    // 3. Cold: the same seven kinds of search in the same proportions, but no two requests alike
    //    (other windows, bounds, words, tags and deep-page positions), so no answer is ever kept.
    const distinct = loads.includes('cold') ? await distinctSearches(db, main.groupId, catalogue, 40_000) : [];
    const file = join(tmpdir(), `poleward-bench-paths-${process.pid}.json`);
    writeFileSync(file, JSON.stringify(distinct));
    try {
      if (loads.includes('cold'))
        await runLoad(`cold: ${distinct.length} distinct searches of the same ${paths.length} kinds, none repeated`, 'load_cold_', { distinctPathsFile: file });
    } finally {
      rmSync(file, { force: true });
    }

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
    await drain(handle.pool);
    await new Promise<void>((resolve) => (listener ? listener.close(() => resolve()) : resolve()));
    await handle.close();
  }
}

if (process.argv[1] && fileURLToPath(import.meta.url) === process.argv[1]) {
  const figures = await benchCatalogue();
  console.log(JSON.stringify(figures, null, 2));
}
