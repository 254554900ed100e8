import { describe, expect, it } from 'vitest';
import { MAX_BATCH, MAX_BATCH_BEFORE, PUSH_BODY_LIMIT_BYTES, PUSH_BYTES_BUDGET, requestChanges, type PushRequest, type PushResponse } from '../../shared/schemas/sync';
import { changesOf } from './changes';
import { describeSync } from './describe';
import { BLOCK_HEAD_BYTES, BLOCK_READING_BYTES, packPush, READING_BYTES, SyncEngine, TransportError, type SyncTransport } from './engine';
import { MemoryDevice } from './memoryStore';

const LAB = '0190a3b0-0000-7000-8000-000000000001';

/**
 * A server stand-in that accepts everything, except payloads it is told to reject, with the server's rules for
 * sequence numbers: a known id is "already have it", a new id at or below the device's last accepted number is out of
 * order. `pushes` holds each push as the server read it (blocks of readings expanded into their changes), `sent` each
 * request as sent.
 */
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
    /** A server from before reading blocks: drops them unread, refuses a push of no changes (400), never says it takes them. */
    old?: boolean;
  } = {},
) {
  const pushes: PushRequest[] = [];
  const sent: PushRequest[] = [];
  const counts = { refused: 0 };
  const stored = new Set<string>();
  let lastSeq = 0;
  const t: SyncTransport = {
    async push(req) {
      const err = opts.fail?.();
      if (err) throw err;
      const refusal = opts.refuse?.(req);
      if (refusal) {
        counts.refused++;
        throw refusal;
      }
      sent.push(req);
      if (opts.old && !req.changes.length) {
        counts.refused++;
        throw new TransportError('client', 'changes: Too small: expected array to have >=1 items', 400);
      }
      const changes = opts.old ? req.changes : requestChanges(req);
      pushes.push({ ...req, changes, readings: undefined });
      const all = changes.map((c) => {
        const why = opts.reject?.(c) ?? null;
        if (why) return { id: c.id, seq: c.seq, outcome: 'rejected' as const, status: 422, reason: why };
        if (stored.has(c.id)) return { id: c.id, seq: c.seq, outcome: 'duplicate' as const, status: 200 };
        if (c.seq <= lastSeq) return { id: c.id, seq: c.seq, outcome: 'out_of_order' as const, status: 409, reason: `not after ${lastSeq}` };
        stored.add(c.id);
        return { id: c.id, seq: c.seq, outcome: 'accepted' as const, status: 201 };
      });
      lastSeq = Math.max(lastSeq, ...changes.map((c) => c.seq));
      const compact = !opts.full && req.answer === 'exceptions';
      const results = compact ? all.filter((r) => r.outcome !== 'accepted') : all;
      const res = { results, ...(compact ? { acceptedUnlisted: all.length - results.length } : {}), lastSeq, serverTime: new Date().toISOString(), clockOffsetMs: 0, clockFlagged: false, ...(opts.old ? {} : { readingBlocks: true }) } satisfies PushResponse;
      return opts.spoil ? opts.spoil(res) : res;
    },
    async pull(cursor) {
      return { changes: [], cursor, more: false };
    },
  };
  return { t, pushes, sent, counts };
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

  it('keeps each push under the push body limit: long notes go in several pushes, readings as many as fit (one by one, to a server from before blocks)', async () => {
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
    const { t, pushes } = fakeServer({ old: true });
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

  it("counts a reading in a block at its bound: the longest numbers a reading can carry stay within it", () => {
    // 17 significant digits and an exponent: the longest a number in these columns is written (22 characters).
    const long = Number('-1.2345678901234567e-7');
    expect(String(long)).toHaveLength(22);
    const longest = (k: number) => ({
      id: `0190a3b0-0000-7000-8000-${String(k).padStart(12, '0')}`,
      kind: 'reading' as const,
      seq: Number.MAX_SAFE_INTEGER - 10 + k,
      recordedAt: 253402300799999,
      payload: { runId: LAB, timeS: -long, pH: long, mV: long },
    });
    const size = (n: number) => Buffer.byteLength(JSON.stringify(packPush(Array.from({ length: n }, (_, k) => longest(k))).readings));
    expect(size(1)).toBeLessThanOrEqual(BLOCK_HEAD_BYTES + BLOCK_READING_BYTES);
    expect(size(2) - size(1)).toBeLessThanOrEqual(BLOCK_READING_BYTES);
    for (const v of [604799.9999999999, -1999.9999999999998, 5e-324, -Number.MIN_VALUE]) expect(String(v).length).toBeLessThanOrEqual(String(long).length);
  });

  it('sends new readings in blocks of one run each: the server reads the same changes, from a body under half the size', async () => {
    const dev = new MemoryDevice('u1');
    const a = dev.createRun(LAB);
    const b = dev.createRun(LAB);
    for (let i = 0; i < 400; i++) {
      dev.addReading(i % 2 ? a.id : b.id, i, 4 + i / 1000);
      if (i === 200) dev.editNotes(a.id, 'stirrer slowed; demo');
    }
    const blocks = fakeServer();
    await new SyncEngine(dev, blocks.t, noTimers).sync();
    expect(dev.outbox.every((o) => o.state === 'acked')).toBe(true);

    // What the server read is every change of the queue, as each would go on its own.
    const oneByOne = dev.outbox.flatMap((row) => {
      const m = changesOf(row, dev.deviceId, LAB);
      return m.kind === 'send' ? m.changes : [];
    });
    const read = blocks.pushes.flatMap((p) => p.changes).sort((x, y) => x.seq - y.seq);
    expect(read).toEqual(oneByOne);
    expect(read.filter((c) => c.kind === 'reading')).toHaveLength(400);

    // Until the server said it takes blocks, the push with them carries no other change after its first reading: the
    // notes edit went in the next push, and two runs' readings went in two blocks.
    const [first, second] = blocks.sent;
    expect(first.readings!.map((r) => r.runId).sort()).toEqual([a.id, b.id].sort());
    const firstReading = Math.min(...first.readings!.flatMap((r) => r.seqs));
    expect(first.changes.every((c) => c.seq < firstReading)).toBe(true);
    expect(second.changes.map((c) => c.kind)).toContain('run_meta_edit');
    const bytes = (list: PushRequest[]) => list.reduce((n, p) => n + Buffer.byteLength(JSON.stringify(p)), 0);
    expect(bytes(blocks.sent)).toBeLessThan(bytes(blocks.pushes) / 2);
  });

  it('to a server from before blocks, which drops them unread: nothing lost, nothing out of order, then one by one', async () => {
    const dev = new MemoryDevice('u1');
    const run = dev.createRun(LAB);
    for (let i = 0; i < 30; i++) dev.addReading(run.id, i, 4);
    dev.editNotes(run.id, 'demo notes');
    for (let i = 30; i < 60; i++) dev.addReading(run.id, i, 4);
    const { t, pushes, sent } = fakeServer({ old: true });
    const e = new SyncEngine(dev, t, noTimers);
    await e.sync();
    expect(sent[0].readings?.length).toBe(1);
    expect(sent.slice(1).every((p) => p.readings === undefined)).toBe(true);
    const readings = pushes.flatMap((p) => p.changes).filter((c) => c.kind === 'reading');
    expect(new Set(readings.map((c) => c.id)).size).toBe(60);
    expect(dev.outbox.every((o) => o.state === 'acked')).toBe(true);
    expect(e.status).toMatchObject({ state: 'synced', rejected: 0 });
  });

  it('a server that takes only MAX_BATCH_BEFORE changes (400 to more) gets the rest in pushes of that size', async () => {
    const dev = new MemoryDevice('u1');
    const run = dev.createRun(LAB);
    for (let i = 0; i < MAX_BATCH_BEFORE + 500; i++) dev.addReading(run.id, i, 4);
    const { t, pushes, counts } = fakeServer({
      old: true,
      refuse: (req) => (req.changes.length > MAX_BATCH_BEFORE ? new TransportError('client', 'changes: Too big: expected array to have <=2000 items', 400) : null),
    });
    const e = new SyncEngine(dev, t, noTimers);
    await e.sync();
    expect(counts.refused).toBe(1);
    // The first push's readings went in a block, which this server dropped (it took the run alone); then one by one.
    expect(pushes.map((p) => p.changes.length)).toEqual([1, MAX_BATCH_BEFORE, 501]);
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
    const { t, pushes, sent, counts } = fakeServer({
      refuse: (req) => (Buffer.byteLength(JSON.stringify(req)) > LIMIT ? new TransportError('client', 'HTTP 413', 413) : null),
    });
    const e = new SyncEngine(dev, t, noTimers);
    await e.sync();
    expect(counts.refused).toBeGreaterThan(0);
    expect(sent.every((p) => Buffer.byteLength(JSON.stringify(p)) <= LIMIT)).toBe(true);
    // Every reading arrived once; the notes edit waits on the device, rejected with the reason.
    const arrived = pushes.flatMap((p) => p.changes).filter((c) => c.kind === 'reading').map((c) => c.id);
    expect(arrived.length).toBe(600);
    expect(new Set(arrived).size).toBe(600);
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
