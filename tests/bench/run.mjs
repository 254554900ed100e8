// `npm run bench`: runs every tests/bench/*.bench.ts (one process each, in name order), collects the JSON-line
// figures they print, prints one table and writes .bench/latest.json. See README.md here for the protocol.
import { spawnSync } from 'node:child_process';
import { cpus, totalmem } from 'node:os';
import { mkdirSync, readdirSync, writeFileSync } from 'node:fs';
import path from 'node:path';

const root = path.resolve(path.dirname(new URL(import.meta.url).pathname), '../..');
process.chdir(root);
const only = process.argv.slice(2);
const files = readdirSync('tests/bench')
  .filter((f) => f.endsWith('.bench.ts'))
  .filter((f) => !only.length || only.some((o) => f.includes(o)))
  .sort();

const machine = {
  cpu: cpus()[0]?.model ?? 'unknown',
  cores: cpus().length,
  memoryGiB: Math.round(totalmem() / 2 ** 30),
  node: process.version,
  date: new Date().toISOString(),
};

const rows = [];
const failures = [];
for (const f of files) {
  console.error(`== ${f}`);
  const r = spawnSync('npx', ['tsx', path.join('tests/bench', f)], {
    encoding: 'utf8',
    stdio: ['ignore', 'pipe', 'inherit'],
    maxBuffer: 64 * 1024 * 1024,
    timeout: 15 * 60 * 1000,
  });
  for (const line of (r.stdout ?? '').split('\n')) {
    const t = line.trim();
    if (!t.startsWith('{')) continue;
    try {
      const row = JSON.parse(t);
      if (row.figure) rows.push({ source: f, ...row });
    } catch {
      /* not a figure */
    }
  }
  if (r.status !== 0) failures.push(`${f} exited with ${r.status ?? r.signal}`);
}

const fmt = (v) => (typeof v === 'number' ? (Math.abs(v) >= 100 ? v.toFixed(0) : Math.abs(v) >= 1 ? v.toFixed(2) : v.toPrecision(3)) : String(v ?? ''));
const table = rows.map((r) => [
  r.figure,
  `${fmt(r.value)} ${r.unit ?? ''}`.trim(),
  r.goal ?? '',
  r.meetsGoal === undefined ? (r.note ?? '') : r.meetsGoal ? 'yes' : 'NO',
  r.ratio === undefined ? '' : fmt(r.ratio),
]);
const head = ['figure', 'value', 'goal', 'meets', 'ratio'];
const widths = head.map((h, i) => Math.max(h.length, ...table.map((row) => String(row[i]).length)));
const line = (cells) => cells.map((c, i) => String(c).padEnd(widths[i])).join('  ');
console.log(`Machine: ${machine.cpu}, ${machine.cores} cores, ${machine.memoryGiB} GiB, Node ${machine.node}`);
console.log(line(head));
console.log(widths.map((w) => '-'.repeat(w)).join('  '));
for (const row of table) console.log(line(row));
for (const f of failures) console.log(`! ${f}`);

mkdirSync('.bench', { recursive: true });
writeFileSync(
  '.bench/latest.json',
  JSON.stringify(
    {
      machine,
      rows: rows.map(({ figure, value, unit, goal, meetsGoal, ratio, note, source }) => ({ figure, value, unit, goal, meetsGoal, ratio, note, source })),
    },
    null,
    2,
  ),
);
process.exit(failures.length ? 1 : 0);
