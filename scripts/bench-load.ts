// Loopback HTTP load on the app as `npm start` runs it (scripts/serve.ts, its own
// process), with autocannon in another process (load-client.mjs): sign-in, catalogue
// search, resonance detail, mode image and run launch, 20 concurrent clients each,
// BENCH_LOAD_SECONDS (default 5) per scenario. This process meanwhile times the health
// check every 100 ms, to show whether a busy API still answers at once.
//   npx tsx scripts/bench-load.ts        (or npm run bench -- --only=load)
// Uses its own database poleward_bench_load (dropped and recreated). Asserts nothing.
import { inlineCompute } from '../server/compute/compute-pool.js';
import { execFile, spawn } from 'node:child_process';
import { availableParallelism, loadavg } from 'node:os';
import { createServer } from 'node:net';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { eq } from 'drizzle-orm';
import { hashPassword } from '../server/auth/password.js';
import { projectRoot } from '../server/config.js';
import { connectDb } from '../server/db/client.js';
import { resonances } from '../server/db/schema/catalogue.js';
import { memberships, researchGroups } from '../server/db/schema/groups.js';
import { users } from '../server/db/schema/users.js';
import { runEngineTask } from '../server/jobs/engine-task.js';
import { handleRunJob } from '../server/jobs/run-job.js';
import { ModelService } from '../server/models/model-service.js';
import { RunService } from '../server/runs/run-service.js';
import { ensureDatabase } from './db.js';
import { migrate } from './migrate.js';

const CONNECTIONS = 20;
const password = 'bench-load-password-1';
/** A small GaAs dot (a = 5 nm), as the server tests use: its runs take seconds, not minutes. */
const dot = (name: string) => ({
  name,
  spacing: 5,
  material: 'gaas',
  grid: { nx: 30, ny: 20 },
  shape: { kind: 'rectangle', x0: 0, y0: 0, width: 150, height: 100 },
  leads: [
    { side: 'left', start: 5, width: 8, name: 'source' },
    { side: 'right', start: 5, width: 8, name: 'drain' },
  ],
});
const window = { emin: 3.0, emax: 6.0, gammaMax: 1.5 };

interface LoadResult {
  rps: number;
  requests: number;
  non2xx: number;
  errors: number;
  p50: number | null;
  p95: number | null;
  p99: number | null;
  duration: number;
}

function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const s = createServer();
    s.once('error', reject);
    s.listen(0, '127.0.0.1', () => {
      const { port } = s.address() as { port: number };
      s.close(() => resolve(port));
    });
  });
}

function autocannon(options: object): Promise<LoadResult> {
  const client = join(dirname(fileURLToPath(import.meta.url)), 'load-client.mjs');
  return new Promise((resolve, reject) =>
    execFile(process.execPath, [client, JSON.stringify(options)], { maxBuffer: 1 << 20 }, (err, stdout) =>
      err ? reject(err) : resolve(JSON.parse(stdout.trim().split('\n').pop()!)),
    ),
  );
}

/** Times GET /api/health every 100 ms until stopped; answers p50, p95 and max (ms). */
function healthProbe(base: string) {
  const times: number[] = [];
  let failures = 0;
  let running = true;
  const loop = (async () => {
    while (running) {
      const t = performance.now();
      try {
        const r = await fetch(`${base}/api/health`, { signal: AbortSignal.timeout(5000) });
        await r.arrayBuffer();
        if (!r.ok) failures++;
      } catch {
        failures++;
      }
      times.push(performance.now() - t);
      await new Promise((r) => setTimeout(r, 100));
    }
  })();
  return async () => {
    running = false;
    await loop;
    times.sort((a, b) => a - b);
    const pct = (p: number) => times[Math.min(times.length - 1, Math.ceil((p / 100) * times.length) - 1)] ?? NaN;
    return { p50: pct(50), p95: pct(95), max: times.at(-1) ?? NaN, failures };
  };
}

export async function benchLoad(): Promise<Record<string, number | string>> {
  const seconds = Number(process.env.BENCH_LOAD_SECONDS ?? 5);
  const server = await ensureDatabase({ databases: ['poleward_bench_load'], recreate: true, log: () => {} });
  const url = server.url('poleward_bench_load');
  await migrate(url);
  const handle = connectDb(url, 4);
  const db = handle.db;
  // One group, one designer, three computed runs (their resonances carry mode images).
  const [group] = await db.insert(researchGroups).values({ name: 'Bench load lab', slug: 'bench-load' }).returning();
  const email = 'bench.load@bench.example';
  const [user] = await db
    .insert(users)
    .values({ email, name: 'Bench Load', passwordHash: await hashPassword(password) })
    .returning();
  await db.insert(memberships).values({ groupId: group!.id, userId: user!.id, role: 'admin' });
  const models = new ModelService(db, inlineCompute);
  const noQueue = { enqueue: async () => 'bench', cancel: async () => {} };
  const runService = new RunService(db, noQueue, inlineCompute);
  const model = await models.create(group!.id, user!.id, dot('Bench load dot'));
  const result = runEngineTask({ kind: 'pole-search', document: dot('Bench load dot'), window, spectrumPoints: 400 });
  for (let k = 0; k < 3; k++) {
    const run = await runService.create(group!.id, user!.id, { kind: 'pole-search', modelId: model.id, window });
    await handleRunJob({ db, compute: async () => result }, { runId: run.id, retryCount: 0, retryLimit: 3 });
  }
  const [pole] = await db.select({ id: resonances.id }).from(resonances).where(eq(resonances.groupId, group!.id)).limit(1);
  await handle.close();

  // The app in its own process, as npm start serves it; no workers, so launched runs only queue.
  const port = await freePort();
  const app = spawn(process.execPath, ['--import', 'tsx', 'scripts/serve.ts'], {
    cwd: projectRoot,
    env: {
      ...process.env,
      NODE_ENV: 'production',
      DATABASE_URL: url,
      POLEWARD_PORT: String(port),
      POLEWARD_PUBLIC_URL: `http://127.0.0.1:${port}`,
      POLEWARD_SMTP_URL: `smtp://127.0.0.1:${await freePort()}`,
      POLEWARD_JWT_SECRET: 'bench-load-secret-0123456789abcdefghijklmnopqrstuvwxyz',
      POLEWARD_WORKERS: '0',
    },
    // Its log is shown only if it fails to start: requests cut short at the end are expected noise.
    stdio: ['ignore', 'ignore', 'pipe'],
  });
  let appLog = '';
  app.stderr!.on('data', (d) => (appLog = (appLog + d).slice(-4000)));
  const base = `http://127.0.0.1:${port}`;
  const figures: Record<string, number | string> = {};
  try {
    for (let k = 0; ; k++) {
      if ((await fetch(`${base}/api/health`).catch(() => null))?.ok) break;
      if (k > 300) throw new Error(`the app did not start within 60 s:\n${appLog}`);
      await new Promise((r) => setTimeout(r, 200));
    }
    const signIn = await fetch(`${base}/api/auth/sign-in`, {
      method: 'POST',
      headers: { 'content-type': 'application/json' },
      body: JSON.stringify({ email, password }),
    });
    if (!signIn.ok) throw new Error(`bench sign-in failed: ${signIn.status}`);
    const session = (await signIn.json()) as { csrfToken: string };
    const cookie = signIn.headers
      .getSetCookie()
      .map((c) => c.split(';')[0])
      .join('; ');
    const g = `/api/groups/${group!.id}`;
    const scenarios: { name: string; request: Record<string, unknown> }[] = [
      {
        name: 'sign-in',
        request: { method: 'POST', path: '/api/auth/sign-in', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ email, password }) },
      },
      {
        name: 'catalogue search',
        request: { method: 'GET', path: `${g}/catalogue?emin=3&emax=6&sort=quality&dir=desc&page=1&pageSize=25`, headers: { cookie } },
      },
      { name: 'resonance detail', request: { method: 'GET', path: `${g}/resonances/${pole!.id}`, headers: { cookie } } },
      { name: 'mode image (full)', request: { method: 'GET', path: `${g}/resonances/${pole!.id}/mode.png?size=full`, headers: { cookie } } },
      {
        name: 'run launch',
        request: {
          method: 'POST',
          path: `${g}/runs`,
          headers: { cookie, 'x-csrf-token': session.csrfToken, 'content-type': 'application/json' },
          body: JSON.stringify({ kind: 'pole-search', modelId: model.id, window }),
        },
      },
    ];
    console.log(`[bench] load: ${CONNECTIONS} connections, ${seconds} s per scenario; health check timed every 100 ms alongside`);
    console.log('  scenario              req/s    p50 ms   p95 ms   p99 ms   non-2xx  errors   health p50/p95/max ms');
    for (const s of scenarios) {
      const stopProbe = healthProbe(base);
      const r = await autocannon({ url: base, connections: CONNECTIONS, duration: seconds, requests: [s.request] });
      const h = await stopProbe();
      const key = s.name.replace(/[^a-z]+/g, '_').replace(/^_|_$/g, '');
      Object.assign(figures, {
        [`${key}_rps`]: r.rps,
        [`${key}_p50_ms`]: r.p50 ?? '—',
        [`${key}_p95_ms`]: r.p95 ?? '—',
        [`${key}_p99_ms`]: r.p99 ?? '—',
        [`${key}_non2xx`]: r.non2xx,
        [`${key}_errors`]: r.errors,
        [`${key}_health_p95_ms`]: h.p95,
        [`${key}_health_max_ms`]: h.max,
      });
      // No answer within the run gives no percentile (null in the client's JSON).
      const ms = (v: number | null, width: number) => (v === null || Number.isNaN(v) ? '—' : v.toFixed(1)).padStart(width);
      console.log(
        `  ${s.name.padEnd(20)} ${r.rps.toFixed(0).padStart(6)} ${ms(r.p50, 9)} ${ms(r.p95, 8)} ${ms(r.p99, 8)} ${String(r.non2xx).padStart(9)} ${String(r.errors).padStart(7)}   ` +
          `${ms(h.p50, 0)}/${ms(h.p95, 0)}/${ms(h.max, 0)}${h.failures ? ` (${h.failures} failed)` : ''}`,
      );
    }
    figures.machine_loadavg_1min = loadavg()[0]!;
    figures.cores = availableParallelism();
    console.log(
      `[bench] machine load average ${loadavg()[0]!.toFixed(1)} on ${availableParallelism()} cores (other work on the machine shows in every figure)`,
    );
    console.log('[bench] non-2xx of sign-in and run launch include the rate and queue limits doing their job (429), not only failures.');
    return figures;
  } finally {
    const exited = new Promise((r) => app.once('exit', r));
    app.kill('SIGTERM');
    await Promise.race([exited, new Promise((r) => setTimeout(r, 5000))]);
    if (app.exitCode === null) app.kill('SIGKILL');
  }
}

if (process.argv[1] && fileURLToPath(import.meta.url) === process.argv[1]) {
  await benchLoad();
}
