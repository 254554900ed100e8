/**
 * Runs list under load (issue 8): 1,000 runs of one lab (demo data, 40 readings each) on in-memory PGlite behind the
 * real app; autocannon, 50 connections for 20 s, over four list queries a desk user makes (first page, a status
 * filter, a free-text search, sorted by Ve). Goals: 0 errors (non-2xx included), p99 ≤ 100 ms.
 *
 * The load generator runs in a worker thread of its own (as clients would be elsewhere), not on the server's event
 * loop; BENCH_LOADGEN=inline puts it back on the server's loop for comparison. autocannon counts a timed-out request
 * (no answer within 10 s) both as an error and as a timeout: it is counted once here.
 */
import type { AddressInfo } from 'node:net';
import autocannon from 'autocannon';
import { openDatabase } from '../../db/client';
import { labs, memberships, readings, runs, users } from '../../db/schema';
import { createApp } from '../../server/app';
import { createServerContext } from '../../server/auth/context';
import { demoId, demoRun } from '../../server/demo/runs';
import * as sessionsRepo from '../../server/repos/sessions';

const RUNS = Number(process.env.BENCH_RUNS ?? 1000);
const PORT = 8321;
const SECRET = 'bench-only-secret-not-for-any-deployment-0001';
const log = (...a: unknown[]) => console.error(...a);

async function main() {
  const database = await openDatabase({ kind: 'pglite' });
  const [lab] = await database.db.insert(labs).values({ name: 'Bench lab (demo)', isDemo: true }).returning();
  const people: { id: string }[] = [];
  for (let i = 0; i < 5; i++) {
    const [u] = await database.db.insert(users).values({ email: `bench${i}@example.org`, displayName: `Bench analyst ${i}` }).returning();
    await database.db.insert(memberships).values({ labId: lab.id, userId: u.id, role: i === 0 ? 'viewer' : 'analyst' });
    people.push(u);
  }
  // A few analysed runs give real results; the rest reuse them (the list only reads the stored result).
  const t0 = performance.now();
  const templates = Array.from({ length: 5 }, (_v, i) => demoRun({ labId: lab.id, analystId: people[1].id, index: i, createdAt: new Date() }));
  const statuses = ['finished', 'submitted', 'approved', 'returned', 'recording'];
  for (let start = 0; start < RUNS; start += 100) {
    const batchRuns = [];
    const batchReadings = [];
    for (let i = start; i < Math.min(RUNS, start + 100); i++) {
      const t = templates[i % templates.length];
      const id = demoId(`bench-${i}`);
      batchRuns.push({ ...t.run, id, analystId: people[1 + (i % 4)].id, status: statuses[i % statuses.length], createdAt: new Date(Date.UTC(2026, 0, 1) + i * 3_600_000) });
      for (const r of t.readings.slice(0, 40)) batchReadings.push({ ...r, id: demoId(`${id}-${r.id}`), runId: id });
    }
    await database.db.insert(runs).values(batchRuns);
    await database.db.insert(readings).values(batchReadings);
  }
  log(`seeded ${RUNS} runs in ${((performance.now() - t0) / 1000).toFixed(1)} s`);

  const deps = { database, log: () => {}, auth: { jwtSecret: SECRET } };
  const ctx = createServerContext(deps);
  const session = await sessionsRepo.createSession(database.db, { userId: people[0].id, expiresAt: new Date(Date.now() + 86_400_000) });
  const token = (await (await ctx.signer()).sign({ userId: people[0].id, sessionId: session.id })).token;
  const server = createApp(deps).listen(PORT, '127.0.0.1');
  await new Promise((r) => server.once('listening', r));
  const url = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
  const base = `/api/labs/${lab.id}/runs`;
  const paths = [`${base}?page=1&pageSize=25`, `${base}?status=submitted&page=3`, `${base}?q=benzoic&pageSize=25`, `${base}?sort=ve&dir=asc&page=2`];
  const check = await fetch(url + paths[0], { headers: { authorization: `Bearer ${token}` } });
  const body = (await check.json()) as { total: number; rows: unknown[] };
  if (check.status !== 200 || body.total !== RUNS || body.rows.length !== 25) throw new Error(`list answered ${check.status} with total ${body.total}`);

  for (const path of paths) {
    const t = performance.now();
    const r = await fetch(url + path, { headers: { authorization: `Bearer ${token}` } });
    await r.text();
    log(`${path.slice(base.length)}: ${r.status} in ${(performance.now() - t).toFixed(1)} ms`);
  }
  const inline = process.env.BENCH_LOADGEN === 'inline';
  const load = (connections: number, duration: number) =>
    autocannon({
      url,
      connections,
      duration,
      headers: { authorization: `Bearer ${token}` },
      requests: paths.map((path) => ({ method: 'GET', path })),
      ...(inline ? {} : { workers: 1 }),
    });
  // Warm-up, then the measured run.
  await load(10, 3);
  const result = await load(50, 20);
  // `errors` already counts the timeouts.
  const errors = result.errors + result.non2xx;
  log(
    `load generator ${inline ? 'on the server’s event loop' : 'in a worker thread'}: requests ${result.requests.total}, ${result.requests.average} req/s, ` +
      `latency p50 ${result.latency.p50} ms, p99 ${result.latency.p99} ms, max ${result.latency.max} ms; errors ${errors} ` +
      `(connection errors and timeouts ${result.errors}, of which timeouts ${result.timeouts}; non-2xx ${result.non2xx})`,
  );
  const where = `${RUNS.toLocaleString('en')} runs, 50 conn, 20 s`;
  const fig = (figure: string, value: number, unit: string, goal?: string, meetsGoal?: boolean) => console.log(JSON.stringify({ figure, value, unit, goal, meetsGoal }));
  fig(`runs list (${where}): errors`, errors, 'count', '= 0', errors === 0);
  fig(`runs list (${where}): p99 latency`, result.latency.p99, 'ms', '<= 100', result.latency.p99 <= 100);
  fig(`runs list (${where}): p50 latency`, result.latency.p50, 'ms');
  fig(`runs list (${where}): throughput`, result.requests.average, 'req/s');
  server.close();
  await database.close();
}

main().catch((err) => {
  console.error(err);
  process.exit(1);
});
