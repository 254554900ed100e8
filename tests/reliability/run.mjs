// `npm run test:reliability`: the fault-injection and fuzz suite at full strength (RELIABILITY=full);
// `--short` (what npm test runs) tries fewer cases. Prints what it tried and what held.
import { spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, readFileSync, rmSync } from 'node:fs';
import path from 'node:path';

const root = path.resolve(path.dirname(new URL(import.meta.url).pathname), '../..');
process.chdir(root);
const short = process.argv.includes('--short');
mkdirSync('.tmp', { recursive: true });
const out = path.join('.tmp', 'reliability.json');
rmSync(out, { force: true });

const env = { ...process.env, RELIABILITY: short ? 'short' : 'full' };
const r = spawnSync(
  'npx',
  ['vitest', 'run', '-c', 'tests/reliability/vitest.config.mts', '--reporter=default', '--reporter=json', `--outputFile=${out}`],
  { stdio: 'inherit', env },
);

if (!existsSync(out)) {
  console.log('reliability: no report written');
  process.exit(1);
}
const report = JSON.parse(readFileSync(out, 'utf8'));
console.log(`\nReliability (${short ? 'short' : 'full'}): what was tried and what held`);
for (const file of report.testResults) {
  const name = path.relative(root, file.name);
  const ok = file.assertionResults.filter((a) => a.status === 'passed').length;
  const bad = file.assertionResults.filter((a) => a.status === 'failed');
  console.log(`  ${bad.length || file.status === 'failed' ? 'FAIL' : 'held'}  ${name}: ${ok} of ${file.assertionResults.length} checks held`);
  for (const b of bad) console.log(`        ✗ ${b.fullName}`);
}
console.log(`reliability: ${report.numPassedTests} passed, ${report.numFailedTests} failed`);
process.exit(r.status ?? 1);
