// Builds the web export into dist/ (expo export, offline).
//   node server/build-web.mjs            always build
//   node server/build-web.mjs --if-stale build only when the app's sources changed since the last build
// Used by `npm start` and by the browser tests.
import { spawnSync } from 'node:child_process';
import { createHash } from 'node:crypto';
import { existsSync, mkdirSync, readdirSync, readFileSync, rmSync, statSync, writeFileSync } from 'node:fs';
import path from 'node:path';

const root = path.resolve(path.dirname(new URL(import.meta.url).pathname), '..');
const dist = path.join(root, 'dist');
const stampFile = path.join(dist, '.halfmark-build');
const inputs = ['app', 'src', 'shared', 'assets', 'app.json', 'metro.config.js', 'package-lock.json', 'server/build-web.mjs', 'server/web-chunks.mjs', 'server/web-offline.mjs'];

function* files(p) {
  const full = path.join(root, p);
  if (!existsSync(full)) return;
  const st = statSync(full);
  if (st.isFile()) {
    yield p;
    return;
  }
  for (const name of readdirSync(full).sort()) {
    if (name === 'node_modules' || name.endsWith('.test.ts')) continue;
    yield* files(path.join(p, name));
  }
}

function sourceStamp() {
  const h = createHash('sha256');
  for (const input of inputs) for (const f of files(input)) h.update(f).update('\0').update(readFileSync(path.join(root, f)));
  return h.digest('hex');
}

// One build at a time in this folder (parallel test runs would otherwise write into one dist/ together).
const lockDir = path.join(root, '.tmp', 'build-web.lock');
mkdirSync(path.dirname(lockDir), { recursive: true });
function alive(pid) {
  try {
    process.kill(pid, 0);
    return true;
  } catch {
    return false;
  }
}
for (;;) {
  try {
    mkdirSync(lockDir);
    writeFileSync(path.join(lockDir, 'pid'), String(process.pid));
    break;
  } catch {
    let pid = 0;
    try {
      pid = Number(readFileSync(path.join(lockDir, 'pid'), 'utf8'));
    } catch {
      /* being written */
    }
    if (pid && !alive(pid)) rmSync(lockDir, { recursive: true, force: true });
    else await new Promise((r) => setTimeout(r, 500));
  }
}
const unlock = () => rmSync(lockDir, { recursive: true, force: true });
process.on('exit', unlock);

const stamp = sourceStamp();
if (process.argv.includes('--if-stale') && existsSync(stampFile) && readFileSync(stampFile, 'utf8') === stamp) {
  console.log('Web export is up to date (dist/).');
  process.exit(0);
}

console.log('Building the web export into dist/ (the first build takes a minute or two)…');
const env = { ...process.env, EXPO_OFFLINE: '1', EXPO_NO_TELEMETRY: '1', EXPO_NO_DEPENDENCY_VALIDATION: '1', CI: '1' };
// Source maps only tell web-chunks.mjs which chunk holds which route; they are removed before anything is served.
const r = spawnSync('npx', ['expo', 'export', '-p', 'web', '--output-dir', 'dist', '--source-maps'], { stdio: 'inherit', env, cwd: root });
if (r.status !== 0) process.exit(r.status ?? 1);
// Shared modules that only later screens need leave the start-up download (see web-chunks.mjs).
const chunks = await import('./web-chunks.mjs');
try {
  console.log(`Start-up chunk: ${chunks.splitCommonChunk(dist)}.`);
} catch (err) {
  console.warn(`Start-up chunk left as exported (it could not be split: ${err instanceof Error ? err.message : err}).`);
}
// HALFMARK_KEEP_SOURCE_MAPS=1 keeps them for profiling a local build (the split chunks' maps are then stale).
if (!process.env.HALFMARK_KEEP_SOURCE_MAPS) chunks.dropSourceMaps(dist);
// Manifest and service worker (offline opening, install to the home screen).
await (await import('./web-offline.mjs')).addOfflineSupport(root, dist);

writeFileSync(stampFile, stamp);
