import { spawn, type ChildProcess } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { DEMO_USERS } from './demo/seed';
import { SyncEngine, type SyncTransport } from '../src/sync/engine';
import { httpTransport } from '../src/sync/httpTransport';
import { MemoryDevice } from '../src/sync/memoryStore';

/**
 * The real server process on a PGlite data directory, killed with SIGKILL in the middle of a large push, then
 * started again on the same directory: the database opens, and every reading the server had acknowledged is there.
 * Then the device finishes its sync against the restarted server: every reading present exactly once.
 */
const dataDir = mkdtempSync(path.join(tmpdir(), 'halfmark-sync-kill-'));
const procs: ChildProcess[] = [];
const SECRET = 'test-only-secret-not-for-any-deployment-0006';

function start(port: number) {
  const child = spawn(process.execPath, ['--import', 'tsx', 'server/main.ts'], {
    env: { ...process.env, PORT: String(port), DATA_DIR: dataDir, WEB_DIR: '/nonexistent', DATABASE_URL: '', JWT_SECRET: SECRET, HALFMARK_DEMO: '1' },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  procs.push(child);
  let out = '';
  child.stdout!.on('data', (d) => (out += d));
  child.stderr!.on('data', (d) => (out += d));
  const exited = new Promise<void>((resolve) => child.on('exit', () => resolve()));
  return { child, output: () => out, exited };
}

async function waitFor(cond: () => boolean, ms: number, what: string) {
  const until = Date.now() + ms;
  while (!cond()) {
    if (Date.now() > until) throw new Error(`timed out waiting for ${what}`);
    await new Promise((r) => setTimeout(r, 100));
  }
}

async function signIn(base: string) {
  const analyst = DEMO_USERS.find((u) => u.role === 'analyst')!;
  const res = await fetch(`${base}/api/auth/login`, {
    method: 'POST',
    headers: { 'content-type': 'application/json' },
    body: JSON.stringify({ email: analyst.email, password: analyst.password }),
  });
  expect(res.status).toBe(200);
  const { accessToken } = (await res.json()) as { accessToken: string };
  const me = (await (await fetch(`${base}/api/auth/me`, { headers: { authorization: `Bearer ${accessToken}` } })).json()) as {
    user: { id: string };
    labs: { labId: string }[];
  };
  return { token: accessToken, userId: me.user.id, labId: me.labs[0].labId };
}

async function allReadingIds(base: string, token: string): Promise<string[]> {
  const t = httpTransport({ baseUrl: base, accessToken: async () => token });
  const ids: string[] = [];
  let cursor = 0;
  for (;;) {
    const page = await t.pull(cursor, 5000);
    for (const c of page.changes) if (c.entity === 'reading') ids.push((c.record as { id: string }).id);
    cursor = page.cursor;
    if (!page.more) return ids;
  }
}

afterAll(async () => {
  for (const p of procs) if (p.exitCode === null && p.signalCode === null) p.kill('SIGTERM');
  await new Promise((r) => setTimeout(r, 1500));
  rmSync(dataDir, { recursive: true, force: true });
});

describe('server killed during a large push', () => {
  it('keeps every acknowledged reading and opens again; the finished sync has each reading once', async () => {
    const N = 3000;
    const first = start(8316);
    await waitFor(() => first.output().includes('serving on'), 120_000, 'the first server');
    const base1 = 'http://127.0.0.1:8316';
    const s1 = await signIn(base1);

    const device = new MemoryDevice(s1.userId);
    const run = device.createRun(s1.labId, 'kill test run (demo)');
    for (let i = 0; i < N; i++) device.addReading(run.id, i, 3 + (i % 800) / 100);

    // Count what the server acknowledged (answers that reached the device), and pull the plug while the fifth
    // request is in flight (sent, its answer not yet back).
    const acknowledged = new Set<string>();
    let sent = 0;
    let base = base1;
    let token = s1.token;
    const inner = () => httpTransport({ baseUrl: base, accessToken: async () => token });
    const t: SyncTransport = {
      async push(req) {
        const answer = inner().push(req);
        if (++sent === 5) setTimeout(() => first.child.kill('SIGKILL'), 5);
        const res = await answer;
        // The engine asks for the exceptions only: a change the answer does not list was accepted.
        const listed = new Map(res.results.map((r) => [r.id, r.outcome]));
        for (const c of req.changes) {
          const outcome = listed.get(c.id) ?? 'accepted';
          if (outcome === 'accepted' || outcome === 'duplicate') acknowledged.add(c.id);
        }
        return res;
      },
      pull: (c, l) => inner().pull(c, l),
    };
    const engine = new SyncEngine(device, t, { maxChanges: 150, setTimer: () => null, clearTimer: () => {} });
    await engine.sync();
    await first.exited;
    expect(first.child.signalCode).toBe('SIGKILL');
    expect(engine.status.state === 'offline' || engine.status.state === 'error').toBe(true);
    expect(acknowledged.size).toBeGreaterThan(0);
    expect(device.outbox.some((o) => o.state !== 'acked')).toBe(true);

    const second = start(8317);
    await waitFor(() => second.output().includes('serving on') || second.child.exitCode !== null, 120_000, 'the restarted server');
    expect(second.output(), 'the database opens after kill -9').toContain('serving on');
    base = 'http://127.0.0.1:8317';
    token = (await signIn(base)).token;

    const afterRestart = new Set(await allReadingIds(base, token));
    const missing = [...acknowledged].filter((id) => id !== run.id && !afterRestart.has(id));
    expect(missing, 'acknowledged readings missing after restart').toEqual([]);

    await engine.sync();
    expect(engine.status.state).toBe('synced');
    const finalIds = await allReadingIds(base, token);
    expect(finalIds.length).toBe(N);
    expect(new Set(finalIds)).toEqual(new Set(device.readings.keys()));
  }, 600_000);
});
