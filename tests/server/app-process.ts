// Runs the app as `npm start` runs it after its set-up (scripts/serve.ts: the API and
// the workers under the child supervisor), against a given database, for fault tests.
import { execFileSync, spawn, type ChildProcess } from 'node:child_process';
import request from 'supertest';
import { projectRoot } from '../../server/config.js';
import { fixturePassword } from './lab-fixture.js';
import { wrapAgent, type SignedIn } from './sign-in-as.js';
import type { Session } from '../../server/auth/session.js';
import { freePort } from './free-port.js';
import { testJwtSecret } from './test-app.js';
import { waitFor } from './wait-for.js';

export interface AppProcess {
  baseUrl: string;
  process: ChildProcess;
  /** Everything the supervisor and its children printed so far. */
  output(): string;
  /** The pid of the supervised child whose command line contains `script`. */
  childPid(script: 'server/main.ts' | 'worker-main.ts'): number | undefined;
  signIn(email: string): Promise<SignedIn>;
  health(): Promise<number>;
  stop(): Promise<void>;
}

export async function startAppProcess(databaseUrl: string, workers = 1): Promise<AppProcess> {
  const port = await freePort();
  const smtp = await freePort();
  const child = spawn(process.execPath, ['--import', 'tsx', 'scripts/serve.ts'], {
    cwd: projectRoot,
    env: {
      ...process.env,
      NODE_ENV: 'test',
      DATABASE_URL: databaseUrl,
      POLEWARD_PORT: String(port),
      POLEWARD_PUBLIC_URL: `http://127.0.0.1:${port}`,
      POLEWARD_SMTP_URL: `smtp://127.0.0.1:${smtp}`,
      POLEWARD_JWT_SECRET: testJwtSecret,
      POLEWARD_WORKERS: String(workers),
      POLEWARD_RUN_STALE_SECONDS: '4',
      POLEWARD_RESTART_FIRST_SECONDS: '0.5',
    },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  let out = '';
  child.stdout!.on('data', (d) => (out += d));
  child.stderr!.on('data', (d) => (out += d));
  const baseUrl = `http://127.0.0.1:${port}`;
  const app: AppProcess = {
    baseUrl,
    process: child,
    output: () => out,
    childPid(script) {
      const ps = execFileSync('ps', ['-o', 'pid=,args=', '--ppid', String(child.pid)], { encoding: 'utf8' });
      const line = ps.split('\n').find((l) => l.includes(script));
      return line ? Number(line.trim().split(/\s+/)[0]) : undefined;
    },
    async signIn(email) {
      const agent = request.agent(baseUrl);
      const res = await agent.post('/api/auth/sign-in').send({ email, password: fixturePassword });
      if (res.status !== 200) throw new Error(`sign-in answered ${res.status}`);
      return wrapAgent(agent, res.body as Session);
    },
    async health() {
      try {
        const r = await fetch(`${baseUrl}/api/health`, { signal: AbortSignal.timeout(2000) });
        return r.status;
      } catch {
        return 0;
      }
    },
    async stop() {
      if (child.exitCode !== null || child.signalCode !== null) return;
      const exited = new Promise((r) => child.once('exit', r));
      child.kill('SIGINT');
      await Promise.race([exited, new Promise((r) => setTimeout(r, 8000))]);
      if (child.exitCode === null) child.kill('SIGKILL');
    },
  };
  await waitFor('the app to answer its health check', async () => (await app.health()) === 200, 90);
  await waitFor('a worker process to start', async () => app.output().includes('waiting for runs'), 60);
  return app;
}
