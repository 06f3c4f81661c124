// Installs the npm packages when they are missing or older than package-lock.json.
// Plain Node (no dependencies), because it runs before anything is installed.
import { createHash } from 'node:crypto';
import { existsSync, readFileSync, writeFileSync } from 'node:fs';
import { execSync } from 'node:child_process';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';

const root = join(dirname(fileURLToPath(import.meta.url)), '..');
const lock = join(root, 'package-lock.json');
const stamp = join(root, 'node_modules', '.poleward-lock-sha256');
const wanted = createHash('sha256').update(readFileSync(lock)).digest('hex');
const have = existsSync(stamp) ? readFileSync(stamp, 'utf8').trim() : '';

if (have !== wanted || !existsSync(join(root, 'node_modules', '.bin', 'tsx'))) {
  console.log('[poleward] installing npm packages (npm ci)…');
  execSync('npm ci --no-audit --no-fund', { cwd: root, stdio: 'inherit' });
  writeFileSync(stamp, wanted + '\n');
}

// The WebAssembly front kernel of the sparse LU, rebuilt when its source changed.
execSync('node scripts/build-wasm.mjs', { cwd: root, stdio: 'inherit' });
