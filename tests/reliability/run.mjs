// `npm run test:reliability`: the fault-injection suite at full strength, one part after another:
//   1. fuzzed requests to every API route (tests/reliability, RELIABILITY=full: 1,000 per route, 0 × 5xx);
//   2. the sync model with more seeds (server/services/sync.model.test.ts, SYNC_MODEL_RUNS, default here 1,000);
//   3. the server killed with SIGKILL during a large push (server/sync-kill.test.ts);
//   4. the page killed mid-sync in Chromium (tests/browser/sync.test.ts).
// `--short` runs only part 1 with fewer cases (npm test runs parts 2–4 in its unit and browser steps anyway).
// Prints what each part tried and what held; the parts print their own seeds and tallies above the summary.
import { spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, readFileSync, rmSync } from 'node:fs';
import path from 'node:path';

const root = path.resolve(path.dirname(new URL(import.meta.url).pathname), '../..');
process.chdir(root);
const short = process.argv.includes('--short');
mkdirSync('.tmp', { recursive: true });

const parts = [
  { name: 'fuzzed requests to every API route', args: ['-c', 'tests/reliability/vitest.config.mts'], env: { RELIABILITY: short ? 'short' : 'full' } },
  ...(short
    ? []
    : [
        { name: 'sync model, more seeds', args: ['server/services/sync.model.test.ts'], env: { SYNC_MODEL_RUNS: process.env.SYNC_MODEL_RUNS ?? '1000' } },
        { name: 'server SIGKILL during a large push', args: ['server/sync-kill.test.ts'], env: {} },
        { name: 'page killed mid-sync (Chromium)', args: ['-c', 'tests/browser/vitest.config.mts', 'tests/browser/sync.test.ts'], env: {} },
      ]),
];

const summary = [];
let failed = 0;
for (const [i, part] of parts.entries()) {
  const out = path.join('.tmp', `reliability-${i + 1}.json`);
  rmSync(out, { force: true });
  console.log(`\n== reliability ${i + 1}/${parts.length}: ${part.name}`);
  const t0 = Date.now();
  const r = spawnSync('npx', ['vitest', 'run', ...part.args, '--reporter=default', '--reporter=json', `--outputFile=${out}`], {
    stdio: 'inherit',
    env: { ...process.env, ...part.env },
  });
  const minutes = ((Date.now() - t0) / 60_000).toFixed(1);
  if (!existsSync(out)) {
    failed++;
    summary.push(`  FAIL  ${part.name}: no report written (exit ${r.status ?? r.signal})`);
    continue;
  }
  const report = JSON.parse(readFileSync(out, 'utf8'));
  if (r.status !== 0) failed++;
  summary.push(`  ${r.status === 0 ? 'held' : 'FAIL'}  ${part.name} (${minutes} min)`);
  for (const file of report.testResults) {
    const ok = file.assertionResults.filter((a) => a.status === 'passed').length;
    summary.push(`        ${path.relative(root, file.name)}: ${ok} of ${file.assertionResults.length} checks held`);
    for (const b of file.assertionResults.filter((a) => a.status === 'failed')) summary.push(`        ✗ ${b.fullName}`);
  }
}

console.log(`\nReliability (${short ? 'short' : 'full'}): what was tried and what held`);
for (const l of summary) console.log(l);
console.log(`reliability: ${parts.length - failed} of ${parts.length} parts held`);
process.exit(failed ? 1 : 0);
