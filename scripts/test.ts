// `npm test`: the whole set-up (browser, PostgreSQL) and every test suite in turn:
// typecheck, lint (ESLint, no warnings), format (Prettier --check), Angular component
// specs, engine + structure + server + API tests with coverage, the production build,
// and the browser tests. Ends with one line "tests: N passed, N failed".
import { spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, readFileSync, rmSync } from 'node:fs';
import { join } from 'node:path';
import { projectRoot } from '../server/config.js';
import { printCoverageByArea } from './coverage-summary.js';
import { ensureDatabase } from './db.js';

const out = join(projectRoot, 'test-output');
rmSync(join(out, 'reports'), { recursive: true, force: true });
mkdirSync(join(out, 'reports'), { recursive: true });
const bin = (name: string) => join(projectRoot, 'node_modules', '.bin', name);
const env = { ...process.env, NG_CLI_ANALYTICS: 'false', FORCE_COLOR: process.env.CI ? '0' : '1' };

function step(name: string, cmd: string, args: string[]): boolean {
  console.log(`\n[test] ── ${name} ──`);
  const started = Date.now();
  const r = spawnSync(cmd, args, { cwd: projectRoot, stdio: 'inherit', env });
  const ok = r.status === 0;
  console.log(`[test] ${name}: ${ok ? 'ok' : `FAILED (exit ${r.status ?? r.signal})`} in ${((Date.now() - started) / 1000).toFixed(1)} s`);
  return ok;
}

function ensureChromium() {
  if (existsSync('/usr/bin/chromium')) return;
  console.log('[test] installing Debian chromium for the browser tests…');
  const r = spawnSync('sh', ['-c', 'apt-get update -qq && DEBIAN_FRONTEND=noninteractive apt-get install -y -qq --no-install-recommends chromium'], {
    stdio: 'inherit',
  });
  if (r.status !== 0) throw new Error('could not install chromium with apt-get');
}

ensureChromium();
await ensureDatabase({ fastUnsafe: true, databases: [] });

const results: Record<string, boolean> = {};
results.typecheck = step('typecheck', 'npm', ['run', '--silent', 'typecheck']);
results.lint = step('lint (ESLint, --max-warnings 0)', bin('eslint'), ['.', '--max-warnings', '0']);
results.unused = step('unused files, exports and dependencies (knip)', bin('knip'), ['--no-progress']);
results.format = step('format (Prettier --check; `npm run format` fixes)', bin('prettier'), ['--check', '.', '--log-level', 'warn']);
results.client = step('client component specs (ng test)', bin('ng'), [
  'test',
  '--watch=false',
  '--reporters=default',
  '--reporters=json',
  `--output-file=${join(out, 'reports', 'client.json')}`,
]);
rmSync(join(out, 'coverage'), { recursive: true, force: true });
results.server = step('engine, structure, server and API tests (vitest, with coverage)', bin('vitest'), [
  'run',
  '--config',
  'vitest.config.ts',
  '--reporter=default',
  '--reporter=json',
  `--outputFile.json=${join(out, 'reports', 'server.json')}`,
  '--coverage',
]);
printCoverageByArea(join(out, 'coverage', 'coverage-summary.json'), projectRoot);
results.build = step('production build of the client', bin('ng'), ['build']);
results.e2e =
  results.build &&
  step('browser tests (Playwright + Debian chromium)', bin('vitest'), [
    'run',
    '--config',
    'vitest.e2e.config.ts',
    '--reporter=default',
    '--reporter=json',
    `--outputFile.json=${join(out, 'reports', 'e2e.json')}`,
  ]);

let passed = 0;
let failed = 0;
for (const report of ['client', 'server', 'e2e']) {
  const file = join(out, 'reports', `${report}.json`);
  if (!existsSync(file)) continue;
  const r = JSON.parse(readFileSync(file, 'utf8')) as { numPassedTests: number; numFailedTests: number };
  passed += r.numPassedTests;
  failed += r.numFailedTests;
}
const failedSteps = Object.entries(results)
  .filter(([, ok]) => !ok)
  .map(([name]) => name);
console.log(`\n[test] steps: ${Object.keys(results).length - failedSteps.length} ok${failedSteps.length ? `, failed: ${failedSteps.join(', ')}` : ''}`);
console.log(`tests: ${passed} passed, ${failed} failed`);
process.exit(failedSteps.length === 0 && failed === 0 ? 0 : 1);
