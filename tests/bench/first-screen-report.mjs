// What the first screen's JS is made of, by package (node_modules) or app folder: a developer's tool for when the
// payload bench goes red. Exports the web app with source maps into .tmp/first-screen-report (the served dist/ is
// left alone), plans the start-up split as the build does (server/web-chunks.mjs) and prints, for the modules the
// first screen loads, raw bytes and the gzip size of each group's code on its own (a little above its share of the
// real files, which compress together). `--later` lists the shared code that waits for later screens too.
//   node tests/bench/first-screen-report.mjs [--later]
import { spawnSync } from 'node:child_process';
import { readFileSync, rmSync, statSync } from 'node:fs';
import path from 'node:path';
import { gzipSync } from 'node:zlib';
import { planSplit, sourcesOf } from '../../server/web-chunks.mjs';

const root = path.resolve(path.dirname(new URL(import.meta.url).pathname), '../..');
const out = path.join(root, '.tmp', 'first-screen-report');
rmSync(out, { recursive: true, force: true });
const env = { ...process.env, EXPO_OFFLINE: '1', EXPO_NO_TELEMETRY: '1', EXPO_NO_DEPENDENCY_VALIDATION: '1', CI: '1' };
const r = spawnSync('npx', ['expo', 'export', '-p', 'web', '--output-dir', out, '--source-maps'], { cwd: root, env, stdio: ['ignore', 'ignore', 'inherit'] });
if (r.status !== 0) process.exit(r.status ?? 1);

const plan = planSplit(out);
if (!plan) throw new Error('no common chunk in the export');
const { dir, chunks, commonFile, startFiles, keep, later } = plan;

/** node_modules/<package>, or the folder of an app path (src/features/shell, src/local, shared/schemas). */
function group(source) {
  const i = source.lastIndexOf('node_modules/');
  if (i >= 0) {
    const parts = source.slice(i + 13).split('/');
    return parts[0].startsWith('@') ? `${parts[0]}/${parts[1]}` : parts[0];
  }
  const parts = source.replace(/^\/+/, '').split('/');
  const depth = parts[0] === 'src' && parts[1] === 'features' ? 3 : 2;
  return parts.length > depth ? parts.slice(0, depth).join('/') : parts.join('/');
}

/** Module source text by source file, for the modules given as [chunk file, module] pairs. */
function bySource(pairs) {
  const groups = new Map();
  for (const [file, m] of pairs) {
    const sources = sourcesOf(dir, file);
    const i = chunks.get(file).indexOf(m);
    const g = group(sources[i] ?? '(no source)');
    groups.set(g, (groups.get(g) ?? '') + m.source);
  }
  return groups;
}

function table(title, pairs) {
  const rows = [...bySource(pairs)].map(([g, code]) => [g, code.length, gzipSync(code, { level: 9 }).length]).sort((a, b) => b[2] - a[2]);
  const all = pairs.map(([, m]) => m.source).join('');
  const kib = (n) => (n / 1024).toFixed(1).padStart(7);
  console.log(`\n${title}: ${pairs.length} modules, ${kib(all.length).trim()} KiB raw, ${kib(gzipSync(all, { level: 9 }).length).trim()} KiB gzip together`);
  console.log(`${'raw KiB'.padStart(7)} ${'gzip KiB'.padStart(8)}  package or folder`);
  for (const [g, raw, gz] of rows) console.log(`${kib(raw)} ${kib(gz).padStart(8)}  ${g}`);
}

const start = [...startFiles].flatMap((f) => chunks.get(f).map((m) => [f, m]));
table(`First screen (${[...startFiles].join(', ')} and the shared modules it reaches)`, [...start, ...keep.map((m) => [commonFile, m])]);
const others = [...chunks].filter(([, ms]) => ms === null).map(([f]) => f);
for (const f of others) {
  const buf = readFileSync(path.join(dir, f));
  console.log(`  + ${f}: ${(statSync(path.join(dir, f)).size / 1024).toFixed(1)} KiB raw, ${(gzipSync(buf, { level: 9 }).length / 1024).toFixed(1)} KiB gzip (runtime or worker, not split)`);
}
if (process.argv.includes('--later')) table('Shared, loaded with later screens', later.map((m) => [commonFile, m]));
