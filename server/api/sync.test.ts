import type { AddressInfo } from 'node:net';
import type { Server } from 'node:http';
import { v7 } from 'uuid';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { authFixture, type AuthFixture } from '../auth/test-fixture';
import { API_BODY_LIMIT_BYTES, PUSH_BODY_LIMIT_BYTES } from '../../shared/schemas/sync';
import { liveHub } from '../services/live';
import { closeTemplate } from '../testing/db';

/** The sync routes over HTTP: push and pull as a device sees them, and live follow by server-sent events. */
let fx: AuthFixture;
let server: Server;
let base: string;

beforeAll(async () => {
  fx = await authFixture();
  server = fx.app.listen(8318, '127.0.0.1');
  await new Promise((r) => server.once('listening', r));
  base = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
}, 300_000);
afterAll(async () => {
  server.closeAllConnections?.();
  await new Promise((r) => server.close(r));
  await fx.database.close();
  await closeTemplate();
});

const auth = async (who: 'analyst' | 'viewer' | 'managerB') => ({ authorization: `Bearer ${(await fx.session(fx.people[who].id)).accessToken}` });

async function pushRun(readings: number) {
  const deviceId = v7();
  const runId = v7();
  const changes = [
    { id: runId, kind: 'run', seq: 1, recordedAt: Date.now(), payload: { labId: fx.labA.id, sampleName: 'live demo run' } },
    ...Array.from({ length: readings }, (_, i) => ({ id: v7(), kind: 'reading', seq: i + 2, recordedAt: Date.now(), payload: { runId, timeS: i, pH: 3 + i / 10 } })),
  ];
  const res = await fx.api().post('/api/sync/push').set(await auth('analyst')).send({ deviceId, sentAt: Date.now(), changes });
  expect(res.status).toBe(200);
  return { deviceId, runId, seq: changes.length, ids: changes.slice(1).map((c) => c.id) };
}

type SseEvent = { event: string; data: any };

/**
 * Reads server-sent events from a fetch body. `until` waits (up to `ms`) for the events so far to satisfy a
 * condition and can be called again on the same open stream; `close` ends it.
 */
function eventStream(res: Response) {
  const reader = res.body!.getReader();
  const dec = new TextDecoder();
  const events: SseEvent[] = [];
  let buf = '';
  let pending: Promise<ReadableStreamReadResult<Uint8Array>> | null = null;
  return {
    events,
    async until(cond: (events: SseEvent[]) => boolean, ms: number): Promise<SseEvent[]> {
      const deadline = Date.now() + ms;
      while (!cond(events)) {
        if (Date.now() > deadline) throw new Error(`no matching event in ${ms} ms; got ${JSON.stringify(events.map((e) => e.event))}`);
        // One read in flight at a time; a timeout only re-checks the deadline and keeps waiting on the same read.
        pending ??= reader.read();
        const got = await Promise.race([pending, new Promise<null>((r) => setTimeout(() => r(null), 200))]);
        if (!got) continue;
        pending = null;
        const { value, done } = got;
        if (done) throw new Error('stream ended');
        if (value) buf += dec.decode(value, { stream: true });
        let i;
        while ((i = buf.indexOf('\n\n')) >= 0) {
          const block = buf.slice(0, i);
          buf = buf.slice(i + 2);
          const ev = /^event: (.*)$/m.exec(block)?.[1];
          const data = /^data: (.*)$/m.exec(block)?.[1];
          if (ev && data) events.push({ event: ev, data: JSON.parse(data) });
        }
      }
      return events;
    },
    close: () => reader.cancel(),
  };
}

describe('sync over HTTP', () => {
  it('a bad envelope is a 400 with details; a bad change inside a good envelope is answered per change', async () => {
    const bad = await fx.api().post('/api/sync/push').set(await auth('analyst')).send({ deviceId: 'not-a-uuid', sentAt: 1, changes: [] });
    expect(bad.status).toBe(400);
    expect(bad.body.error.code).toBe('invalid_input');
    const res = await fx
      .api()
      .post('/api/sync/push')
      .set(await auth('analyst'))
      .send({ deviceId: v7(), sentAt: Date.now(), changes: [{ id: v7(), kind: 'reading', seq: 1, recordedAt: 0, payload: { runId: 'x' } }] });
    expect(res.status).toBe(200);
    expect(res.body.results[0]).toMatchObject({ outcome: 'rejected', status: 422 });
  });

  it("answer: 'exceptions' answers plain acceptances with a count; an unknown answer form is a 400", async () => {
    const runId = v7();
    const changes = [
      { id: runId, kind: 'run', seq: 1, recordedAt: Date.now(), payload: { labId: fx.labA.id, sampleName: 'compact answer demo run' } },
      { id: v7(), kind: 'reading', seq: 2, recordedAt: Date.now(), payload: { runId, timeS: 1, pH: 4.1 } },
      { id: v7(), kind: 'reading', seq: 3, recordedAt: Date.now(), payload: { runId, timeS: 2, pH: 40 } },
    ];
    const body = { deviceId: v7(), sentAt: Date.now(), changes, answer: 'exceptions' };
    const res = await fx.api().post('/api/sync/push').set(await auth('analyst')).send(body);
    expect(res.status).toBe(200);
    expect(res.body.acceptedUnlisted).toBe(2);
    expect(res.body.results).toMatchObject([{ id: changes[2].id, seq: 3, outcome: 'rejected', status: 422 }]);
    const odd = await fx.api().post('/api/sync/push').set(await auth('analyst')).send({ ...body, answer: 'some' });
    expect(odd.status).toBe(400);
  });

  it('a push may carry a body up to its own limit (4 MB), above the 2 MB of other routes; beyond it is a 413', async () => {
    const runId = v7();
    const n = 12_000;
    const changes = [
      { id: runId, kind: 'run', seq: 1, recordedAt: Date.now(), payload: { labId: fx.labA.id, sampleName: 'large push demo run' } },
      ...Array.from({ length: n }, (_, i) => ({ id: v7(), kind: 'reading', seq: i + 2, recordedAt: Date.now(), payload: { runId, timeS: i / 2, pH: 3 + (i % 900) / 100 } })),
    ];
    const body = { deviceId: v7(), sentAt: Date.now(), changes, answer: 'exceptions' };
    const size = Buffer.byteLength(JSON.stringify(body));
    expect(size).toBeGreaterThan(API_BODY_LIMIT_BYTES);
    expect(size).toBeLessThan(PUSH_BODY_LIMIT_BYTES);
    const res = await fx.api().post('/api/sync/push').set(await auth('analyst')).send(body);
    expect(res.status, JSON.stringify(res.body).slice(0, 300)).toBe(200);
    expect(res.body).toMatchObject({ results: [], acceptedUnlisted: n + 1, lastSeq: n + 1 });
    const stored = await fx.database.query<{ n: number }>('select count(*)::int as n from readings where run_id = $1', [runId]);
    expect(stored[0].n).toBe(n);
    const tooBig = await fx.api().post('/api/sync/push').set(await auth('analyst')).send({ ...body, deviceId: v7(), junk: 'x'.repeat(PUSH_BODY_LIMIT_BYTES - size + 1) });
    expect(tooBig.status).toBe(413);
  }, 60_000);

  it('live follow: a colleague (viewer) sees readings pushed after they opened the stream', async () => {
    const { runId, deviceId, seq, ids: before } = await pushRun(3);
    const res = await fetch(`${base}/api/runs/${runId}/live`, { headers: { ...(await auth('viewer')), accept: 'text/event-stream' } });
    expect(res.status).toBe(200);
    expect(res.headers.get('content-type')).toMatch(/text\/event-stream/);
    const stream = eventStream(res);
    const seen = (evs: SseEvent[]) => new Set(evs.filter((e) => e.event === 'changes').flatMap((e) => e.data.changes.map((c: any) => c.record.id)));
    try {
      // The stream is ready (the server listens for the run's changes) and its first page brought the run and its
      // three readings: only now is the next reading pushed, so it can come only by notification.
      await stream.until((evs) => evs.some((e) => e.event === 'ready') && before.every((id) => seen(evs).has(id)), 20_000);
      expect(stream.events[0].event).toBe('ready');
      const eventsBeforePush = stream.events.length;
      const later = [v7(), v7()];
      const r = await fx
        .api()
        .post('/api/sync/push')
        .set(await auth('analyst'))
        .send({ deviceId, sentAt: Date.now(), changes: later.map((id, i) => ({ id, kind: 'reading', seq: seq + i + 1, recordedAt: Date.now(), payload: { runId, timeS: 100 + i, pH: 7 } })) });
      expect(r.status).toBe(200);
      expect(r.body.results.map((x: { outcome: string }) => x.outcome)).toEqual(['accepted', 'accepted']);
      await stream.until((evs) => later.every((id) => seen(evs.slice(eventsBeforePush)).has(id)), 20_000);
      // The pushed readings arrived on the stream after the push, as readings of this run with the values pushed.
      const arrived = stream.events
        .slice(eventsBeforePush)
        .filter((e) => e.event === 'changes')
        .flatMap((e) => e.data.changes)
        .filter((c: any) => later.includes(c.record.id));
      expect(arrived.map((c: any) => [c.entity, c.record.runId, c.record.timeS, c.record.pH])).toEqual([
        ['reading', runId, 100, 7],
        ['reading', runId, 101, 7],
      ]);
    } finally {
      await stream.close();
    }
    // Closing the stream ends the follow (the LISTEN is dropped with the last follower).
    await waitFor(() => liveHub(fx.database).followers === 0, 5000);
  });

  it('polling fallback: the same route with Accept: application/json answers one page after a cursor', async () => {
    const { runId, ids } = await pushRun(4);
    const first = await fx.api().get(`/api/runs/${runId}/live`).set(await auth('viewer'));
    expect(first.status).toBe(200);
    const readingIds = first.body.changes.filter((c: any) => c.entity === 'reading').map((c: any) => c.record.id);
    expect(readingIds).toEqual(ids);
    const next = await fx.api().get(`/api/runs/${runId}/live?after=${first.body.cursor}`).set(await auth('viewer'));
    expect(next.body.changes).toEqual([]);
    const other = await fx.api().get(`/api/runs/${runId}/live`).set(await auth('managerB'));
    expect(other.status).toBe(404);
  });
});

async function waitFor(cond: () => boolean, ms: number) {
  const until = Date.now() + ms;
  while (!cond()) {
    if (Date.now() > until) throw new Error('timed out');
    await new Promise((r) => setTimeout(r, 50));
  }
}
