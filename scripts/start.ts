// `npm start`: PostgreSQL, migrations, demo data, the web client build, then the API
// (which also runs the local mail stand-in) and the worker processes, each restarted
// with back-off when it dies (services.ts). Ctrl-C stops all.
import { spawnSync } from 'node:child_process';
import { existsSync, readdirSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { loadConfig, projectRoot } from '../server/config.js';
import { connectDb } from '../server/db/client.js';
import { runQueue, startBoss } from '../server/jobs/boss.js';
import { ensureDatabase } from './db.js';
import { migrate } from './migrate.js';
import { demoAccounts, printDemoAccounts, seedDemo } from './seed.js';
import { seedCatalogue } from './seed-catalogue.js';
import { startServices, stopOnSignals } from './services.js';

const config = loadConfig();
const dbName = new URL(config.databaseUrl).pathname.slice(1) || 'poleward';
await ensureDatabase({ port: config.dbPort, databases: [dbName] });
await migrate(config.databaseUrl);

const handle = connectDb(config.databaseUrl, 2);
const seeded = await seedDemo(handle.db);
const boss = await startBoss({ databaseUrl: config.databaseUrl });
const designer = demoAccounts.find((a) => a.role === 'designer')!;
// The microwave group files its own demo devices (catalogue/qh-*.json) under its admin.
const microwaveAdmin = demoAccounts.find((a) => a.group === 'quarry-hill')!;
await seedCatalogue(handle.db, runQueue(boss), seeded.groups[designer.group]!, seeded.users[designer.email]!, console.log, {
  'quarry-hill': { groupId: seeded.groups['quarry-hill']!, userId: seeded.users[microwaveAdmin.email]! },
});
await boss.stop({ graceful: false, wait: true });
await handle.close();

buildClientIfStale();

const services = startServices({ workers: config.workers });
stopOnSignals(services);

console.log(
  `\n[poleward] open ${config.publicUrl} — API and client on port ${config.port}, PostgreSQL on 127.0.0.1:${config.dbPort}, ${config.workers} worker process(es)`,
);
printDemoAccounts();
console.log(
  '[poleward] a process that dies is restarted (1 s, 2 s, 4 s … up to 30 s apart); Ctrl-C stops the app and the workers (PostgreSQL keeps running; `npm run db:stop` stops it).\n',
);

/** Builds the Angular client when there is no build yet or a source file is newer than it. */
function buildClientIfStale() {
  const index = join(config.clientDir, 'index.html');
  const builtAt = existsSync(index) ? statSync(index).mtimeMs : 0;
  const newest = Math.max(newestFile(join(projectRoot, 'src')), newestFile(join(projectRoot, 'shared')), statSync(join(projectRoot, 'angular.json')).mtimeMs);
  if (builtAt > newest) return;
  console.log('[poleward] building the web client (ng build)…');
  const ng = join(projectRoot, 'node_modules', '.bin', 'ng');
  const r = spawnSyncInherit(ng, ['build']);
  if (r !== 0) {
    console.error('[poleward] the client build failed');
    process.exit(1);
  }
}

function newestFile(dir: string): number {
  let newest = 0;
  for (const entry of readdirSync(dir, { withFileTypes: true })) {
    const p = join(dir, entry.name);
    newest = Math.max(newest, entry.isDirectory() ? newestFile(p) : statSync(p).mtimeMs);
  }
  return newest;
}

function spawnSyncInherit(cmd: string, args: string[]): number {
  return spawnSync(cmd, args, { cwd: projectRoot, stdio: 'inherit', env: { ...process.env, NG_CLI_ANALYTICS: 'false' } }).status ?? 1;
}
