// The running app without the set-up: the API and POLEWARD_WORKERS worker processes,
// each restarted with back-off when it dies (child-supervisor.ts). `npm start` runs
// this after PostgreSQL, migrations, demo data and the client build; serve.ts runs it
// alone (the fault tests, against their own database). SIGINT/SIGTERM stop everything.
import { join } from 'node:path';
import { projectRoot } from '../server/config.js';
import { superviseChildren, type BackOff, type ChildSpec } from './child-supervisor.js';

export function startServices(opts: { workers: number; backOff?: BackOff; env?: NodeJS.ProcessEnv }) {
  // node with tsx's loader, not the tsx wrapper, so signals reach the process itself.
  const node = (script: string) => ({ command: process.execPath, args: ['--import', 'tsx', join(projectRoot, script)] });
  const specs: ChildSpec[] = [{ name: 'api', ...node('server/main.ts') }];
  for (let k = 0; k < opts.workers; k++) specs.push({ name: `worker ${k + 1}`, ...node('server/jobs/worker-main.ts') });
  return superviseChildren(specs, { backOff: opts.backOff, spawnOptions: { cwd: projectRoot, stdio: 'inherit', env: opts.env ?? process.env } });
}

/** Stops the children on Ctrl-C or SIGTERM, then exits. */
export function stopOnSignals(services: { stop(): Promise<void> }) {
  let stopping = false;
  const stop = async () => {
    if (stopping) return;
    stopping = true;
    console.log('[poleward] stopping the API and the workers…');
    await services.stop();
    process.exit(0);
  };
  process.on('SIGINT', () => void stop());
  process.on('SIGTERM', () => void stop());
}
