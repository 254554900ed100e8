// `npm test`: every check of the project, in order, with one closing line "N passed, N failed".
//   typecheck → lint → unit + API tests (vitest) → reliability (short) → browser tests (playwright-core + chromium)
// Set HALFMARK_TEST_SKIP=browser,reliability to leave steps out while working (CI never does).
import { spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, readFileSync, rmSync } from 'node:fs';
import path from 'node:path';

const root = path.resolve(path.dirname(new URL(import.meta.url).pathname), '..');
process.chdir(root);
const tmp = path.join(root, '.tmp');
mkdirSync(tmp, { recursive: true });
const skip = new Set((process.env.HALFMARK_TEST_SKIP ?? '').split(',').filter(Boolean));

let passed = 0;
let failed = 0;
let skipped = 0;
const lines = [];

function run(cmd, args, env = {}) {
  const r = spawnSync(cmd, args, { stdio: 'inherit', env: { ...process.env, ...env } });
  return r.status === 0;
}

function step(name, ok) {
  if (ok) passed++;
  else failed++;
  lines.push(`${ok ? 'ok  ' : 'FAIL'} ${name}`);
}

function vitestStep(name, args, env) {
  const out = path.join(tmp, `${name}.json`);
  rmSync(out, { force: true });
  const ok = run('npx', ['vitest', 'run', ...args, '--reporter=default', '--reporter=json', `--outputFile=${out}`], env);
  if (!existsSync(out)) {
    step(`${name} (no report written)`, false);
    return;
  }
  const r = JSON.parse(readFileSync(out, 'utf8'));
  passed += r.numPassedTests;
  failed += r.numFailedTests;
  skipped += r.numPendingTests + (r.numTodoTests ?? 0);
  // A suite that fails to load counts as a failure even when no test inside it ran.
  const broken = r.testResults.filter((t) => t.status === 'failed' && t.assertionResults.every((a) => a.status !== 'failed')).length;
  failed += broken;
  lines.push(`${ok ? 'ok  ' : 'FAIL'} ${name}: ${r.numPassedTests} passed, ${r.numFailedTests + broken} failed, ${r.numPendingTests} skipped`);
}

function ensureChromium() {
  const chromium = process.env.CHROMIUM_PATH ?? '/usr/bin/chromium';
  if (existsSync(chromium)) return true;
  if (process.getuid?.() === 0) {
    console.log('Chromium is missing: installing Debian chromium (apt-get)…');
    run('apt-get', ['update', '-qq']);
    run('apt-get', ['install', '-y', '-qq', 'chromium'], { DEBIAN_FRONTEND: 'noninteractive' });
    if (existsSync(chromium)) return true;
  }
  console.error(`Chromium is missing at ${chromium}. Install Debian's chromium (apt-get install -y chromium) and run npm test again.`);
  return false;
}

step('typecheck (tsc)', run('npx', ['tsc', '--noEmit', '-p', 'tsconfig.json']));
step('lint (eslint)', run('npx', ['eslint', '.']));
vitestStep('unit', []);
if (!skip.has('reliability')) {
  vitestStep('reliability', ['-c', 'tests/reliability/vitest.config.mts'], { RELIABILITY: 'short' });
}
if (!skip.has('browser')) {
  if (ensureChromium()) vitestStep('browser', ['-c', 'tests/browser/vitest.config.mts']);
  else step('browser tests (chromium missing)', false);
}

console.log('\nSummary:');
for (const l of lines) console.log(`  ${l}`);
console.log(`\n${passed} passed, ${failed} failed${skipped ? `, ${skipped} skipped` : ''}`);
process.exit(failed ? 1 : 0);
