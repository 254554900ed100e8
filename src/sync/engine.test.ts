import { describe, expect, it } from 'vitest';
import { MAX_BATCH, MAX_BATCH_BEFORE, PUSH_BODY_LIMIT_BYTES, PUSH_BYTES_BUDGET, type PushRequest, type PushResponse } from '../../shared/schemas/sync';
import { describeSync } from './describe';
import { READING_BYTES, SyncEngine, TransportError, type SyncTransport } from './engine';
import { MemoryDevice } from './memoryStore';

const LAB = '0190a3b0-0000-7000-8000-000000000001';

/** A server stand-in that accepts everything, except payloads it is told to reject. */
function fakeServer(
  opts: {
    reject?: (c: PushRequest['changes'][number]) => string | null;
    fail?: () => TransportError | null;
    /** Refuses a request before the server sees it (an older server's limit, a proxy's); counted in `refused`. */
    refuse?: (req: PushRequest) => TransportError | null;
    /** Answer every change (as a server does without `answer: 'exceptions'`) instead of only the exceptions. */
    full?: boolean;
    /** Spoils the answer after it is made (a server bug or a mixed-up reply). */
    spoil?: (res: PushResponse) => PushResponse;
  } = {},
) {
  const pushes: PushRequest[] = [];
  const counts = { refused: 0 };
  const t: SyncTransport = {
    async push(req) {
      const err = opts.fail?.();
      if (err) throw err;
      const refusal = opts.refuse?.(req);
      if (refusal) {
        counts.refused++;
        throw refusal;
      }
      pushes.push(req);
      const all = req.changes.map((c) => {
        const why = opts.reject?.(c) ?? null;
        return why ? { id: c.id, seq: c.seq, outcome: 'rejected' as const, status: 422, reason: why } : { id: c.id, seq: c.seq, outcome: 'accepted' as const, status: 201 };
      });
      const compact = !opts.full && req.answer === 'exceptions';
      const results = compact ? all.filter((r) => r.outcome !== 'accepted') : all;
      const res = { results, ...(compact ? { acceptedUnlisted: all.length - results.length } : {}), lastSeq: req.changes.at(-1)!.seq, serverTime: new Date().toISOString(), clockOffsetMs: 0, clockFlagged: false } satisfies PushResponse;
      return opts.spoil ? opts.spoil(res) : res;
    },
    async pull(cursor) {
      return { changes: [], cursor, more: false };
    },
  };
  return { t, pushes, counts };
}
const noTimers = { setTimer: () => null, clearTimer: () => {} };

describe('sync engine', () => {
  it('pushes in bounded batches, in outbox order, marks never sent, all acknowledged', async () => {
    const dev = new MemoryDevice('u1');
    const run = dev.createRun(LAB);
    for (let i = 0; i < 25; i++) dev.addReading(run.id, i, 4);
    const { t, pushes } = fakeServer();
    const e = new SyncEngine(dev, t, { ...noTimers, maxChanges: 10 });
    await e.sync();
    expect(pushes.length).toBe(3);
    expect(pushes.every((p) => p.changes.length <= 10)).toBe(true);
    const seqs = pushes.flatMap((p) => p.changes.map((c) => c.seq));
    expect(seqs).toEqual([...seqs].sort((a, b) => a - b));
    expect(pushes.flatMap((p) => p.changes.map((c) => c.kind)).filter((k) => k === 'reading').length).toBe(25);
    expect(dev.outbox.every((o) => o.state === 'acked')).toBe(true);
    expect(e.status.state).toBe('synced');
  });

  it('keeps each push under the push body limit: long notes go in several pushes, readings as many as fit', async () => {
    const dev = new MemoryDevice('u1');
    const run = dev.createRun(LAB);
    // 300 offline edits of 19,000 three-byte characters (~17 MB in all; notes take up to 20,000 characters).
    let notesBytes = 0;
    for (let i = 0; i < 300; i++) {
      const notes = `${i} ${'€'.repeat(19_000)}`;
      notesBytes += Buffer.byteLength(notes);
      dev.editNotes(run.id, notes);
    }
    for (let i = 0; i < MAX_BATCH; i++) dev.addReading(run.id, i, 4);
    const { t, pushes } = fakeServer();
    const e = new SyncEngine(dev, t, noTimers);
    await e.sync();
    const bodies = pushes.map((p) => Buffer.byteLength(JSON.stringify(p)));
    expect(Math.max(...bodies)).toBeLessThanOrEqual(PUSH_BODY_LIMIT_BYTES);
    expect(pushes.length).toBeGreaterThan(notesBytes / PUSH_BYTES_BUDGET);
    // The readings after the notes: all of them go, each push of readings only as full as the budget allows at a
    // reading's bound (nothing is cut short of it), never more than MAX_BATCH.
    expect(pushes.flatMap((p) => p.changes).filter((c) => c.kind === 'reading').length).toBe(MAX_BATCH);
    const onlyReadings = pushes.filter((p) => p.changes.every((c) => c.kind === 'reading')).map((p) => p.changes.length);
    const fit = Math.min(MAX_BATCH, Math.floor(PUSH_BYTES_BUDGET / READING_BYTES));
    expect(onlyReadings.slice(0, -1).every((n) => n === fit)).toBe(true);
    expect(onlyReadings.length).toBeGreaterThanOrEqual(1);
    expect(onlyReadings.at(-1)!).toBeLessThanOrEqual(fit);
    expect(dev.outbox.every((o) => o.state === 'acked')).toBe(true);
    expect(e.status.state).toBe('synced');
  });

  it("counts a reading's size without writing it out: the bound holds for the longest numbers a reading can carry", async () => {
    const dev = new MemoryDevice('u1');
    const run = dev.createRun(LAB);
    dev.addReading(run.id, 1, 4);
    const { t, pushes } = fakeServer();
    await new SyncEngine(dev, t, noTimers).sync();
    const reading = pushes[0].changes.find((c) => c.kind === 'reading')!;
    const longest = { ...reading, seq: Number.MAX_SAFE_INTEGER, recordedAt: 253402300799999, payload: { ...(reading.payload as object), timeS: 604799.9999999999, pH: -1.2345678901234567, mV: -1999.9999999999998 } };
    expect(Buffer.byteLength(JSON.stringify(longest))).toBeLessThanOrEqual(READING_BYTES);
  });

  it('a server that takes only MAX_BATCH_BEFORE changes (400 to more) gets the rest in pushes of that size', async () => {
    const dev = new MemoryDevice('u1');
    const run = dev.createRun(LAB);
    for (let i = 0; i < MAX_BATCH_BEFORE + 500; i++) dev.addReading(run.id, i, 4);
    const { t, pushes, counts } = fakeServer({
      refuse: (req) => (req.changes.length > MAX_BATCH_BEFORE ? new TransportError('client', 'changes: Too big: expected array to have <=2000 items', 400) : null),
    });
    const e = new SyncEngine(dev, t, noTimers);
    await e.sync();
    expect(counts.refused).toBe(1);
    expect(pushes.map((p) => p.changes.length)).toEqual([MAX_BATCH_BEFORE, 501]);
    expect(dev.outbox.every((o) => o.state === 'acked')).toBe(true);
    expect(e.status.state).toBe('synced');
  });

  it('a proxy with a lower body limit (413): pushes shrink until they pass; a row too large alone is rejected, the rest go', async () => {
    const dev = new MemoryDevice('u1');
    const run = dev.createRun(LAB);
    for (let i = 0; i < 300; i++) dev.addReading(run.id, i, 4);
    // Notes of 30,000 bytes: over the proxy's 20,000 on their own.
    dev.editNotes(run.id, 'n'.repeat(30_000));
    for (let i = 300; i < 600; i++) dev.addReading(run.id, i, 4);
    const LIMIT = 20_000;
    const { t, pushes, counts } = fakeServer({
      refuse: (req) => (Buffer.byteLength(JSON.stringify(req)) > LIMIT ? new TransportError('client', 'HTTP 413', 413) : null),
    });
    const e = new SyncEngine(dev, t, noTimers);
    await e.sync();
    expect(counts.refused).toBeGreaterThan(0);
    expect(pushes.every((p) => Buffer.byteLength(JSON.stringify(p)) <= LIMIT)).toBe(true);
    // Every reading arrived once; the notes edit waits on the device, rejected with the reason.
    const sent = pushes.flatMap((p) => p.changes).filter((c) => c.kind === 'reading').map((c) => c.id);
    expect(sent.length).toBe(600);
    expect(new Set(sent).size).toBe(600);
    const notes = dev.outbox.find((o) => o.entity === 'run' && o.op === 'update')!;
    expect(notes.state).toBe('rejected');
    expect(notes.lastError).toMatch(/Too large for the server/);
    expect(dev.outbox.filter((o) => o !== notes).every((o) => o.state === 'acked')).toBe(true);
  });

  it('a rejected change is kept with its reason and does not block the rest', async () => {
    const dev = new MemoryDevice('u1');
    const run = dev.createRun(LAB);
    dev.addReading(run.id, 1, 4);
    const bad = dev.addReading(run.id, 2, 4.5);
    dev.addReading(run.id, 3, 5);
    const { t } = fakeServer({ reject: (c) => (c.id === bad.id ? 'pH out of range' : null) });
    const e = new SyncEngine(dev, t, noTimers);
    await e.sync();
    const row = dev.outbox.find((o) => o.recordId === bad.id)!;
    expect(row).toMatchObject({ state: 'rejected', lastError: 'pH out of range' });
    expect(dev.outbox.filter((o) => o.state === 'acked').length).toBe(dev.outbox.length - 1);
    expect(e.status).toMatchObject({ state: 'synced', rejected: 1, waiting: 0 });
    expect(describeSync(e.status, true)).toEqual({ label: 'All sent · 1 rejected', tone: 'danger' });
  });

  it("asks for the exceptions only, and takes a full answer (one result per change) just as well", async () => {
    for (const full of [false, true]) {
      const dev = new MemoryDevice('u1');
      const run = dev.createRun(LAB);
      for (let i = 0; i < 5; i++) dev.addReading(run.id, i, 4 + i / 10);
      const bad = dev.addReading(run.id, 9, 4.5);
      const { t, pushes } = fakeServer({ full, reject: (c) => (c.id === bad.id ? 'pH out of range' : null) });
      await new SyncEngine(dev, t, noTimers).sync();
      expect(pushes[0].answer).toBe('exceptions');
      expect(dev.outbox.find((o) => o.recordId === bad.id)).toMatchObject({ state: 'rejected', lastError: 'pH out of range' });
      expect(dev.outbox.filter((o) => o.state === 'acked').length).toBe(dev.outbox.length - 1);
    }
  });

  it('settles nothing from an answer that does not cover exactly the changes sent', async () => {
    const spoilers: [string, (res: PushResponse) => PushResponse][] = [
      ['one change too few counted', (r) => ({ ...r, acceptedUnlisted: r.acceptedUnlisted! - 1 })],
      ['one too many', (r) => ({ ...r, acceptedUnlisted: r.acceptedUnlisted! + 1 })],
      ['a result for a change not sent', (r) => ({ ...r, results: [{ ...r.results[0], id: '0190a3b0-0000-7000-8000-0000000000ff' }] })],
      ['the same change listed twice', (r) => ({ ...r, results: [r.results[0], r.results[0]], acceptedUnlisted: r.acceptedUnlisted! - 1 })],
      ['a full answer with a result missing', (r) => ({ ...r, results: r.results.slice(1), acceptedUnlisted: undefined })],
    ];
    for (const [what, spoil] of spoilers) {
      const dev = new MemoryDevice('u1');
      const run = dev.createRun(LAB);
      for (let i = 0; i < 4; i++) dev.addReading(run.id, i, 4);
      const rejectFirst = (c: PushRequest['changes'][number]) => (c.kind === 'reading' && c.payload && (c.payload as { timeS: number }).timeS === 0 ? 'no' : null);
      const { t, pushes } = fakeServer({ reject: rejectFirst, spoil, full: what.startsWith('a full') });
      const e = new SyncEngine(dev, t, noTimers);
      await e.sync();
      expect(pushes.length, what).toBe(1);
      expect(dev.outbox.filter((o) => o.entity !== 'mark').every((o) => o.state === 'pending'), what).toBe(true);
      expect(e.status.state, what).toBe('error');
    }
  });

  it('a run with no lab waits (and everything after it), and says why', async () => {
    const dev = new MemoryDevice('u1');
    const run = dev.createRun(LAB);
    dev.runs.set(run.id, { ...dev.runs.get(run.id)!, labId: null });
    dev.addReading(run.id, 1, 4);
    const { t, pushes } = fakeServer();
    const e = new SyncEngine(dev, t, noTimers);
    await e.sync();
    expect(pushes).toEqual([]);
    expect(e.status).toMatchObject({ state: 'waiting', waiting: 3 });
    expect(e.status.message).toMatch(/no lab/);
  });

  it('offline: nothing lost, backoff grows, a later sync sends everything once; calls during a sync share it', async () => {
    const dev = new MemoryDevice('u1');
    const run = dev.createRun(LAB);
    dev.addReading(run.id, 1, 4);
    let down = true;
    const delays: number[] = [];
    const { t, pushes } = fakeServer({ fail: () => (down ? new TransportError('offline', 'no network') : null) });
    const e = new SyncEngine(dev, t, { setTimer: (_f, ms) => delays.push(ms), clearTimer: () => {}, random: () => 1, baseBackoffMs: 1000 });
    await e.sync();
    await e.sync();
    await e.sync();
    expect(e.status.state).toBe('offline');
    expect(delays).toEqual([2000, 4000, 8000]);
    down = false;
    const a = e.sync();
    const b = e.sync();
    await Promise.all([a, b]);
    expect(pushes.length).toBe(1);
    expect(dev.outbox.every((o) => o.state === 'acked')).toBe(true);
  });

  it('a 401 leaves everything queued and says to sign in', async () => {
    const dev = new MemoryDevice('u1');
    dev.createRun(LAB);
    const { t } = fakeServer({ fail: () => new TransportError('auth', 'expired', 401) });
    const e = new SyncEngine(dev, t, noTimers);
    await e.sync();
    expect(e.status).toMatchObject({ state: 'signed-out', waiting: 1 });
    expect(describeSync(e.status, true).label).toBe('Sign in to send 1 waiting');
  });
});
