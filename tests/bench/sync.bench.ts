/**
 * Sync throughput (issue 6): 10,000 readings recorded offline on one device, then pushed through the real HTTP API
 * over loopback by the real sync engine until every outbox row is acknowledged. Goal ≤ 3 s. Compared with a raw
 * multi-row INSERT of the same rows into the same table of the same database in the same run, written the fastest
 * way we know: both a VALUES list (chunked under the 65,535-parameter limit) and one INSERT … SELECT FROM unnest()
 * are measured, and the goal ratio (≤ 2) is taken against the faster of the two. COPY FROM a CSV blob (not an INSERT)
 * is reported beside them. The raw inserts store the same columns the push stores (readings.seq included, from the
 * same sequence), without the protocol: no idempotency check, no change log, no locks. Their rows look like pushed
 * ones (a device time and a payload hash of their own each), and the unnest insert sends a column that is the same
 * on every row as one value, as the push does (it used to send it as an array, which made it slower to bind).
 * Database: PGlite in a data directory on disk, as `npm start` runs the product (SYNC_BENCH_DB=memory: in-memory PGlite,
 * what tests use; there each growth of a file copies the whole file in memory, which lands on whichever round grows it).
 * The heap is collected before each timed section, push and raw alike, so garbage left by the set-up (the device's
 * 20,000 outbox rows, the previous round) is not collected inside the timing; what a push allocates is.
 * Median of 5 measured rounds after one warm-up round.
 */
import { createHash } from 'node:crypto';
import { mkdtempSync, rmSync } from 'node:fs';
import type { AddressInfo } from 'node:net';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { setFlagsFromString } from 'node:v8';
import { runInNewContext } from 'node:vm';
import { v7 } from 'uuid';
import { openDatabase } from '../../db/client';
import { labs, memberships, readings, runs, users } from '../../db/schema';
import { createApp } from '../../server/app';
import { createServerContext } from '../../server/auth/context';
import * as sessionsRepo from '../../server/repos/sessions';
import { SyncEngine } from '../../src/sync/engine';
import { httpTransport } from '../../src/sync/httpTransport';
import { MemoryDevice } from '../../src/sync/memoryStore';

const N = 10_000;
const ROUNDS = 5;
const ON_DISK = process.env.SYNC_BENCH_DB !== 'memory';
// A full collection before each timed section (see the header); the flag set at run time exposes gc() to new contexts.
setFlagsFromString('--expose-gc');
const collect = runInNewContext('gc') as () => void;
const PORT = 8313;
const SECRET = 'bench-only-secret-not-for-any-deployment-0001';
const log = (...a: unknown[]) => console.error(...a);
const RAW = ['values', 'unnest', 'copy'] as const;
type Raw = (typeof RAW)[number];

const cpuSince = (c0: NodeJS.CpuUsage) => {
  const c = process.cpuUsage(c0);
  return (c.user + c.system) / 1000;
};

// The root package is CommonJS: no top-level await.
async function main() {
  const dataDir = ON_DISK ? mkdtempSync(path.join(tmpdir(), 'halfmark-syncbench-')) : undefined;
  const database = await openDatabase({ kind: 'pglite', dataDir });
  const pg = database.pglite!;
  const [lab] = await database.db.insert(labs).values({ name: 'Bench lab (demo)' }).returning();
  const [user] = await database.db.insert(users).values({ email: 'bench@example.org', displayName: 'Bench analyst' }).returning();
  await database.db.insert(memberships).values({ labId: lab.id, userId: user.id, role: 'analyst' });
  const deps = { database, log: () => {}, auth: { jwtSecret: SECRET } };
  const ctx = createServerContext(deps);
  const session = await sessionsRepo.createSession(database.db, { userId: user.id, expiresAt: new Date(Date.now() + 86_400_000) });
  const token = (await (await ctx.signer()).sign({ userId: user.id, sessionId: session.id })).token;
  const server = createApp(deps).listen(PORT, '127.0.0.1');
  // The raw rounds keep the (shared) event loop busy for seconds between sync rounds; with the default 5 s the
  // server may close an idle keep-alive connection just as the next round's first push reuses it ("fetch failed").
  server.keepAliveTimeout = 120_000;
  await new Promise((r) => server.once('listening', r));
  const baseUrl = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;

  async function syncRound(): Promise<{ ms: number; cpuMs: number; requestsMs: number; requests: number }> {
    const device = new MemoryDevice(user.id);
    const run = device.createRun(lab.id, 'bench run (demo)');
    for (let i = 0; i < N; i++) device.addReading(run.id, i * 0.5, 3 + (i % 900) / 100);
    // Time spent inside push requests (server work, loopback, the answer read as text) apart from the device's own.
    let requestsMs = 0;
    let requests = 0;
    const timed: typeof fetch = async (input, init) => {
      const t = performance.now();
      const res = await fetch(input, init);
      const text = await res.text();
      requestsMs += performance.now() - t;
      requests++;
      return new Response(text, { status: res.status, headers: res.headers });
    };
    const engine = new SyncEngine(device, httpTransport({ baseUrl, accessToken: async () => token, fetch: timed }), { pull: false, setTimer: () => null, clearTimer: () => {} });
    collect();
    const t0 = performance.now();
    const c0 = process.cpuUsage();
    await engine.sync();
    const ms = performance.now() - t0;
    const cpuMs = cpuSince(c0);
    const left = device.outbox.filter((o) => o.state !== 'acked');
    if (left.length || engine.status.state !== 'synced') throw new Error(`not fully acknowledged: ${left.length} rows, ${engine.status.state} ${engine.status.message}`);
    const stored = await database.query<{ n: number }>('select count(*)::int as n from readings where run_id = $1', [run.id]);
    if (stored[0].n !== N) throw new Error(`server holds ${stored[0].n} readings, expected ${N}`);
    return { ms, cpuMs, requestsMs, requests };
  }

  async function rawRound(how: Raw): Promise<{ ms: number; cpuMs: number }> {
    const runId = v7();
    await database.db.insert(runs).values({ id: runId, labId: lab.id, analystId: user.id, sampleName: 'raw bench run (demo)' });
    const now = new Date();
    // Change-log places as the push takes them (the next N of the sequence), reserved outside the timing: the same
    // index work, at the same end of readings (lab_id, seq).
    const [{ last }] = await database.query<{ last: string }>(`select setval('sync_changes_seq_seq', nextval('sync_changes_seq_seq') + ${N - 1}) as last`);
    const firstSeq = Number(last) - N + 1;
    // Rows shaped like the pushed ones: a device time and a payload hash of their own each, one run, lab, kind and
    // receipt time for all.
    const rows = Array.from({ length: N }, (_, i) => {
      const id = v7();
      return {
        id,
        runId,
        labId: lab.id,
        kind: 'reading',
        timeS: i * 0.5,
        pH: 3 + (i % 900) / 100,
        mV: null,
        deviceRecordedAt: new Date(now.getTime() - (N - i)),
        receivedAt: now,
        payloadHash: createHash('sha256').update(id).digest('hex'),
        seq: firstSeq + i,
      };
    });
    collect();
    const t0 = performance.now();
    const c0 = process.cpuUsage();
    if (how === 'values') {
      // Chunked only because a statement takes at most 65,535 parameters (13 per row).
      await database.db.transaction(async (tx) => {
        for (let i = 0; i < rows.length; i += 5000) await tx.insert(readings).values(rows.slice(i, i + 5000));
      });
    } else if (how === 'unnest') {
      // Arrays for the columns that differ from row to row; one value for those the same on every row (as the push
      // sends them).
      const col = (f: (r: (typeof rows)[number]) => string | number) => `{${rows.map((r) => { const v = f(r); return typeof v === 'number' ? String(v) : `"${v}"`; }).join(',')}}`;
      await pg.transaction(async (tx) => {
        await tx.query(
          `insert into readings (id, run_id, lab_id, kind, time_s, ph, mv, device_recorded_at, received_at, payload_hash, seq)
           select u.id, $2::uuid, $3::uuid, $4::text, u.t, u.ph, null, u.at, $5::timestamptz, u.hash, u.seq
           from unnest($1::uuid[], $6::float8[], $7::float8[], $8::timestamptz[], $9::text[], $10::int8[]) as u(id, t, ph, at, hash, seq)`,
          [col((r) => r.id), runId, lab.id, 'reading', now.toISOString(), col((r) => r.timeS), col((r) => r.pH), col((r) => r.deviceRecordedAt.toISOString()), col((r) => r.payloadHash), col((r) => r.seq)],
        );
      });
    } else {
      const iso = now.toISOString();
      const csv = rows.map((r) => `${r.id},${r.runId},${r.labId},${r.kind},${r.timeS},${r.pH},,${r.deviceRecordedAt.toISOString()},${iso},${r.payloadHash},${r.seq}\n`).join('');
      await pg.transaction(async (tx) => {
        await tx.query(`copy readings (id, run_id, lab_id, kind, time_s, ph, mv, device_recorded_at, received_at, payload_hash, seq) from '/dev/blob' with (format csv)`, [], {
          blob: new Blob([csv]),
        });
      });
    }
    const ms = performance.now() - t0;
    const cpuMs = cpuSince(c0);
    const stored = await database.query<{ n: number }>('select count(*)::int as n from readings where run_id = $1', [runId]);
    if (stored[0].n !== N) throw new Error(`raw ${how} stored ${stored[0].n} readings, expected ${N}`);
    return { ms, cpuMs };
  }

  const median = (xs: number[]) => [...xs].sort((a, b) => a - b)[Math.floor(xs.length / 2)];
  await syncRound();
  for (const how of RAW) await rawRound(how);
  const sync: { ms: number; cpuMs: number; requestsMs: number; requests: number }[] = [];
  const raw: Record<Raw, { ms: number; cpuMs: number }[]> = { values: [], unnest: [], copy: [] };
  for (let i = 0; i < ROUNDS; i++) {
    sync.push(await syncRound());
    for (const how of RAW) raw[how].push(await rawRound(how));
    // CPU time of this process (server, device and PGlite all run in it): less moved by other load than wall time.
    log(
      `round ${i + 1}: sync ${sync[i].ms.toFixed(0)} ms (CPU ${sync[i].cpuMs.toFixed(0)} ms; ${sync[i].requests} push requests, ${sync[i].requestsMs.toFixed(0)} ms inside them), ` +
        RAW.map((how) => `raw ${how} ${raw[how][i].ms.toFixed(0)} ms (CPU ${raw[how][i].cpuMs.toFixed(0)})`).join(', '),
    );
  }
  const s = median(sync.map((x) => x.ms));
  const r = { values: median(raw.values.map((x) => x.ms)), unnest: median(raw.unnest.map((x) => x.ms)), copy: median(raw.copy.map((x) => x.ms)) };
  const fastest = r.values <= r.unnest ? 'VALUES' : 'unnest';
  const best = Math.min(r.values, r.unnest);
  const ratio = s / best;
  const where = ON_DISK ? 'PGlite on disk' : 'PGlite in memory';
  const fig = (row: Record<string, unknown>) => console.log(JSON.stringify(row));
  fig({ figure: `sync: ${N} readings pushed over loopback HTTP to fully acknowledged (median of ${ROUNDS}, ${where})`, value: Math.round(s), unit: 'ms', goal: '<= 3000', meetsGoal: s <= 3000 });
  fig({ figure: 'sync: of which inside push requests (server, loopback, answer read), median', value: Math.round(median(sync.map((x) => x.requestsMs))), unit: 'ms', note: 'reported' });
  fig({ figure: `sync: push time / fastest raw multi-row INSERT (${fastest}, ${where})`, value: Math.round(ratio * 100) / 100, unit: 'x', ratio, goal: '<= 2', meetsGoal: ratio <= 2 });
  // References: measured beside the push, no goal of their own.
  fig({ figure: `sync: raw multi-row INSERT … VALUES of the same ${N} rows (median of ${ROUNDS}, ${where})`, value: Math.round(r.values), unit: 'ms', note: 'reference' });
  fig({ figure: `sync: raw INSERT … SELECT FROM unnest() of the same ${N} rows (median of ${ROUNDS}, ${where})`, value: Math.round(r.unnest), unit: 'ms', note: 'reference' });
  fig({ figure: `sync: raw COPY FROM a CSV blob of the same ${N} rows (median of ${ROUNDS}, ${where})`, value: Math.round(r.copy), unit: 'ms', note: 'reference' });
  fig({ figure: 'sync: push time / raw VALUES insert', value: Math.round((s / r.values) * 100) / 100, unit: 'x', ratio: s / r.values, note: 'reported' });
  fig({ figure: 'sync: push time / raw unnest insert', value: Math.round((s / r.unnest) * 100) / 100, unit: 'x', ratio: s / r.unnest, note: 'reported' });
  fig({ figure: 'sync: push time / raw COPY', value: Math.round((s / r.copy) * 100) / 100, unit: 'x', ratio: s / r.copy, note: 'reported' });

  server.close();
  server.closeAllConnections?.();
  await database.close();
  if (dataDir) rmSync(dataDir, { recursive: true, force: true });
}

main().catch((err) => {
  console.error(err);
  process.exit(1);
});
