// The device side of sync: pushes the local outbox in bounded batches, settles each row from the server's answer,
// then pulls the lab's changes. One sync at a time (single-flight); started on app start, on the browser's online
// event, periodically while anything waits, and again after a failure with exponential backoff.
// Nothing here deletes local data: a row leaves the queue only as "acked" (the server has it) or "rejected" (the
// server said it never can take it, with the reason, shown to the user).
import { MAX_BATCH, MAX_BATCH_BEFORE, PUSH_BYTES_BUDGET, type Change, type ChangeResult, type MetaResolution, type PullResponse, type PulledChange, type PushRequest, type PushResponse, type ReadingBlock } from '../../shared/schemas/sync';
import type { OutboxRow } from '../local/types';
import { changesOf, needsLab, SLOTS, toChanges, type MapContext } from './changes';

export interface Settlement {
  /** Outbox seq of the row. */
  seq: number;
  state: 'acked' | 'rejected';
  reason?: string;
  /** What became of metadata edits in this row (server version, and the winning value on a conflict). */
  meta?: (MetaResolution & { runId: string })[];
}

/** What the engine needs from the local database; src/sync/localStore.ts implements it over src/local. */
export interface SyncStore {
  readonly deviceId: string;
  /** Rows still to push (pending or sent), oldest first. */
  pendingOutbox(limit: number): Promise<OutboxRow[]>;
  runLab(runId: string): Promise<string | null>;
  /** Applies all settlements in one transaction. */
  settle(list: Settlement[]): Promise<void>;
  counts(): Promise<{ waiting: number; rejected: number }>;
  pullCursor(): Promise<number>;
  /** Stores pulled records and the new cursor in one transaction. */
  applyPulled(changes: PulledChange[], cursor: number): Promise<void>;
}

export class TransportError extends Error {
  constructor(
    readonly kind: 'offline' | 'auth' | 'server' | 'client',
    message: string,
    readonly status?: number,
  ) {
    super(message);
  }
}

export interface SyncTransport {
  push(req: PushRequest): Promise<PushResponse>;
  pull(cursor: number, limit: number): Promise<PullResponse>;
}

export type SyncState = 'offline' | 'syncing' | 'waiting' | 'synced' | 'error' | 'signed-out';

export interface SyncStatus {
  state: SyncState;
  waiting: number;
  rejected: number;
  lastSyncedAt: number | null;
  message: string | null;
  /** Offset the server measured for this device's clock at the last push, ms. */
  clockOffsetMs: number | null;
  clockFlagged: boolean;
}

export interface EngineOptions {
  /** Outbox rows read per push. */
  batchSize?: number;
  /** Changes per push at most (the server takes up to MAX_BATCH). */
  maxChanges?: number;
  /** Pull after pushing (off only in measurements of the push alone). */
  pull?: boolean;
  pullLimit?: number;
  isOnline?: () => boolean;
  /** Subscribes to "the connection came back"; returns an unsubscribe. */
  onOnline?: (cb: () => void) => () => void;
  periodicMs?: number;
  baseBackoffMs?: number;
  maxBackoffMs?: number;
  now?: () => number;
  random?: () => number;
  setTimer?: (fn: () => void, ms: number) => unknown;
  clearTimer?: (t: unknown) => void;
  log?: (msg: string, err?: unknown) => void;
}

const FAILED: ChangeResult['outcome'][] = ['rejected', 'conflict', 'out_of_order'];

/**
 * True when a push's answer speaks of exactly the changes sent: each listed result names a change of the request
 * (id and seq) once, and the listed plus those counted as accepted are all of them. Anything else (an answer cut
 * short, or meant for another request) settles nothing: the rows stay queued and replays are idempotent.
 */
export function answerCovers(res: PushResponse, changes: readonly Change[]): boolean {
  if (res.results.length + (res.acceptedUnlisted ?? 0) !== changes.length) return false;
  if (!res.results.length) return true;
  const sent = new Map<number, string>();
  for (const c of changes) sent.set(c.seq, c.id);
  const seen = new Set<number>();
  for (const r of res.results) {
    if (sent.get(r.seq) !== r.id || seen.has(r.seq)) return false;
    seen.add(r.seq);
  }
  return true;
}

export class SyncEngine {
  private current: Promise<void> | null = null;
  private again = false;
  private failures = 0;
  /** Changes per push now: maxChanges, or fewer once a server took only as many as servers before MAX_BATCH did. */
  private maxChanges: number;
  /** UTF-8 bytes of changes per push now: PUSH_BYTES_BUDGET, or less once something on the way refused a body (413). */
  private bytesBudget = PUSH_BYTES_BUDGET;
  /**
   * Whether the server takes readings in blocks: unknown until a push's answer says so. A server from before blocks
   * drops them unread and still takes the push's other changes, moving the device's last sequence number past them;
   * so until the server has said yes, a push with blocks carries no other change after its first reading (those
   * readings then stay above that number and go again one by one), and a server that does not say yes gets no more.
   */
  private blocks: 'unknown' | 'yes' | 'no' = 'unknown';
  private timer: unknown = null;
  private unOnline: (() => void) | null = null;
  private listeners = new Set<(s: SyncStatus) => void>();
  private readonly o: Required<Omit<EngineOptions, 'onOnline' | 'log'>> & Pick<EngineOptions, 'onOnline' | 'log'>;
  status: SyncStatus = { state: 'waiting', waiting: 0, rejected: 0, lastSyncedAt: null, message: null, clockOffsetMs: null, clockFlagged: false };

  constructor(
    private readonly store: SyncStore,
    private readonly transport: SyncTransport,
    opts: EngineOptions = {},
  ) {
    this.o = {
      // Each reading's mark has an outbox row of its own that never goes out: twice the readings one push can carry
      // (the body budget at a reading's bound ends a push before MAX_BATCH does) fill one. Rows read beyond what a
      // push takes are decoded for nothing (their payloads are JSON in the store).
      batchSize: 2 * READINGS_PER_PUSH + 1,
      maxChanges: MAX_BATCH,
      pull: true,
      pullLimit: 1000,
      isOnline: () => true,
      periodicMs: 15_000,
      baseBackoffMs: 2_000,
      maxBackoffMs: 60_000,
      now: Date.now,
      random: Math.random,
      setTimer: (fn, ms) => setTimeout(fn, ms),
      clearTimer: (t) => clearTimeout(t as ReturnType<typeof setTimeout>),
      ...opts,
    };
    this.maxChanges = this.o.maxChanges;
  }

  subscribe(fn: (s: SyncStatus) => void): () => void {
    this.listeners.add(fn);
    fn(this.status);
    return () => this.listeners.delete(fn);
  }

  private set(patch: Partial<SyncStatus>) {
    this.status = { ...this.status, ...patch };
    for (const l of this.listeners) l(this.status);
  }

  /** Starts the triggers (app start, online event, periodic) and syncs once. */
  start(): void {
    this.unOnline = this.o.onOnline?.(() => {
      this.failures = 0;
      void this.sync();
    }) ?? null;
    void this.sync();
  }

  stop(): void {
    this.unOnline?.();
    this.unOnline = null;
    if (this.timer !== null) this.o.clearTimer(this.timer);
    this.timer = null;
  }

  /** Runs one sync; a call during a sync returns that sync's promise and makes it run once more at its end. */
  sync(): Promise<void> {
    if (this.current) {
      this.again = true;
      return this.current;
    }
    this.current = (async () => {
      try {
        do {
          this.again = false;
          await this.runOnce();
        } while (this.again);
      } finally {
        this.current = null;
      }
    })();
    return this.current;
  }

  private schedule(ms: number) {
    if (this.timer !== null) this.o.clearTimer(this.timer);
    this.timer = this.o.setTimer(() => {
      this.timer = null;
      void this.sync();
    }, ms);
  }

  private backoffMs(): number {
    const raw = Math.min(this.o.maxBackoffMs, this.o.baseBackoffMs * 2 ** Math.min(this.failures, 16));
    return Math.round(raw * (0.5 + this.o.random() / 2));
  }

  private async refreshCounts() {
    const c = await this.store.counts();
    this.set({ waiting: c.waiting, rejected: c.rejected });
    return c;
  }

  private async runOnce(): Promise<void> {
    await this.refreshCounts();
    if (!this.o.isOnline()) {
      this.set({ state: 'offline', message: null });
      return;
    }
    this.set({ state: 'syncing', message: null });
    try {
      const blocked = await this.pushAll();
      if (this.o.pull) await this.pullAll();
      this.failures = 0;
      const c = await this.refreshCounts();
      this.set({ state: c.waiting ? 'waiting' : 'synced', lastSyncedAt: this.o.now(), message: blocked });
      // Periodic even when all is synced: new recordings go out, colleagues' changes come in.
      this.schedule(this.o.periodicMs);
    } catch (err) {
      await this.refreshCounts().catch(() => undefined);
      const e = err instanceof TransportError ? err : new TransportError('server', err instanceof Error ? err.message : String(err));
      if (e.kind === 'auth') {
        // Kept, not dropped: everything goes out after the next sign-in.
        this.set({ state: 'signed-out', message: 'Sign in again to send what is waiting.' });
        return;
      }
      this.failures++;
      this.set({ state: e.kind === 'offline' ? 'offline' : 'error', message: e.message });
      this.o.log?.('sync failed', err);
      this.schedule(this.backoffMs());
    }
  }

  /** Pushes batches until the queue is empty or waits on a row; returns why it waits, if it does. */
  private async pushAll(): Promise<string | null> {
    const ctx: MapContext = { deviceId: this.store.deviceId, runLab: (id) => this.store.runLab(id) };
    for (;;) {
      const rows = await this.store.pendingOutbox(this.o.batchSize);
      if (!rows.length) return null;
      const local: Settlement[] = [];
      const send: OutboxRow[] = [];
      const changes: Change[] = [];
      // UTF-8 JSON of the changes so far, kept under the body limit (a row that would pass it waits for the next push).
      let bytes = 0;
      let waitReason: string | null = null;
      const packing = this.blocks !== 'no';
      // Runs whose block this push has begun (each block's own keys are counted once).
      const blockRuns = new Set<string>();
      for (const row of rows) {
        // Only a run's first row waits on the database (its lab); awaiting every row would cost a turn of the
        // event loop per reading.
        const m = needsLab(row) ? await toChanges(row, ctx) : changesOf(row, ctx.deviceId, null);
        if (m.kind === 'wait') {
          waitReason = m.reason;
          break;
        }
        if (m.kind === 'local-only') local.push({ seq: row.seq, state: 'acked' });
        else if (m.kind === 'invalid') local.push({ seq: row.seq, state: 'rejected', reason: m.reason });
        else {
          // The first row always goes (a row has up to SLOTS changes; a limit below that must not stall the queue).
          if (changes.length && changes.length + m.changes.length > this.maxChanges) break;
          // A new reading goes in its run's block (a row of one change), counted at its bound there.
          const blockRun = packing && m.changes.length === 1 && blockable(m.changes[0]) ? (m.changes[0].payload as { runId: string }).runId : null;
          if (this.blocks === 'unknown' && blockRuns.size && blockRun === null) break;
          const rowBytes = blockRun === null ? m.changes.reduce((n, c) => n + bytesOf(c), 0) : BLOCK_READING_BYTES + (blockRuns.has(blockRun) ? 0 : BLOCK_HEAD_BYTES);
          if (changes.length && bytes + rowBytes > this.bytesBudget) break;
          bytes += rowBytes;
          if (blockRun !== null) blockRuns.add(blockRun);
          for (const c of m.changes) changes.push(c);
          send.push(row);
        }
      }
      if (!changes.length) {
        if (local.length) await this.store.settle(local);
        if (waitReason || !local.length) return waitReason;
        continue;
      }
      // Only the exceptions come back; every other change is counted as accepted (checked against what was sent).
      let res: PushResponse;
      const req = packing ? packPush(changes) : { changes };
      try {
        res = await this.transport.push({ deviceId: this.store.deviceId, sentAt: Math.max(0, Math.round(this.o.now())), ...req, answer: 'exceptions' });
      } catch (err) {
        // A server from before blocks refuses a push of blocks alone (no changes) as a bad request: go again without.
        if (req.readings && this.blocks === 'unknown' && err instanceof TransportError && err.status === 400) {
          this.blocks = 'no';
          continue;
        }
        // A server from before MAX_BATCH was raised refuses a longer push as a bad request: go again at its size.
        if (err instanceof TransportError && err.status === 400 && changes.length > MAX_BATCH_BEFORE) {
          this.maxChanges = MAX_BATCH_BEFORE;
          continue;
        }
        // Too large for the server or a proxy before it (a lower body limit than ours): halve the pushes until they
        // pass. A single row refused on its own can never pass there: rejected with the reason, the queue goes on.
        if (err instanceof TransportError && err.status === 413) {
          if (send.length > 1) {
            this.bytesBudget = Math.max(1, Math.floor(bytes / 2));
            this.maxChanges = Math.max(1, Math.floor(changes.length / 2));
          } else {
            await this.store.settle([
              ...local,
              { seq: send[0].seq, state: 'rejected', reason: 'Too large for the server to take in one request (HTTP 413); it stays on this device.' },
            ]);
          }
          continue;
        }
        throw err;
      }
      if (req.readings) {
        if (res.readingBlocks !== true) {
          // Dropped unread by an older server: the rest of the push went in; its readings go again one by one.
          this.blocks = 'no';
          continue;
        }
        this.blocks = 'yes';
      }
      if (!answerCovers(res, changes)) throw new TransportError('server', "The server's answer does not match the changes sent; they stay queued and go again.");
      this.set({ clockOffsetMs: res.clockOffsetMs, clockFlagged: res.clockFlagged });
      // Results by outbox row (a row's changes share its seq ÷ SLOTS); a row with none was accepted whole.
      const byRow = new Map<number, ChangeResult[]>();
      for (const r of res.results) {
        const seq = Math.floor(r.seq / SLOTS);
        const list = byRow.get(seq);
        if (list) list.push(r);
        else byRow.set(seq, [r]);
      }
      let runOf: Map<string, Change> | null = null;
      const settled: Settlement[] = local;
      for (const row of send) {
        const results = byRow.get(row.seq);
        if (!results) {
          settled.push({ seq: row.seq, state: 'acked' });
          continue;
        }
        const failed = results.filter((r) => FAILED.includes(r.outcome));
        const withMeta = results.filter((r) => r.meta);
        runOf ??= withMeta.length ? new Map(changes.map((c) => [c.id, c])) : null;
        const meta = withMeta.map((r) => ({ ...r.meta!, runId: (runOf!.get(r.id)?.payload as { runId: string }).runId }));
        settled.push(
          failed.length
            ? { seq: row.seq, state: 'rejected', reason: failed.map((f) => f.reason ?? f.outcome).join('; '), meta }
            : { seq: row.seq, state: 'acked', meta },
        );
      }
      await this.store.settle(settled);
      if (waitReason) return waitReason;
    }
  }

  private async pullAll(): Promise<void> {
    let cursor = await this.store.pullCursor();
    for (;;) {
      const page = await this.transport.pull(cursor, this.o.pullLimit);
      if (page.changes.length || page.cursor !== cursor) await this.store.applyPulled(page.changes, page.cursor);
      cursor = page.cursor;
      if (!page.more) return;
    }
  }
}

/**
 * A change's size as UTF-8 JSON (bytes). A reading's is bounded (a uuid, a kind and six numbers, all ASCII: under
 * 300 bytes), so it is not written out to be counted; anything else may carry long text (notes, reasons).
 */
export const READING_BYTES = 320;
/**
 * A reading's size in a block (bytes): a uuid, a sequence number, a time and three payload values, each in its
 * column's array (the longest numbers: a 16-digit sequence number, 15-digit epoch ms, and the rest written in at most
 * 22 characters, as in -1.2345678901234567e-7).
 */
export const BLOCK_READING_BYTES = 150;
/** A block's own keys and run id. */
export const BLOCK_HEAD_BYTES = 128;
/** Readings one push can carry: the body budget at each reading's bound in a block, or MAX_BATCH. */
const READINGS_PER_PUSH = Math.min(MAX_BATCH, Math.floor(PUSH_BYTES_BUDGET / BLOCK_READING_BYTES));

/** A new reading whose payload a block carries exactly: these four values, numbers or null, and nothing else. */
function blockable(c: Change): boolean {
  if (c.kind !== 'reading') return false;
  const p = c.payload as Record<string, unknown>;
  let keys = 0;
  for (const k in p) if (Object.hasOwn(p, k)) keys++;
  return keys === 4 && typeof p.runId === 'string' && typeof p.timeS === 'number' && numberOrNull(p.pH) && numberOrNull(p.mV);
}
const numberOrNull = (v: unknown) => typeof v === 'number' || v === null;

/** The push of these changes: each run's new readings in a block (shared/schemas/sync.ts), the rest as they are. */
export function packPush(changes: readonly Change[]): { changes: Change[]; readings?: ReadingBlock[] } {
  const rest: Change[] = [];
  const blocks = new Map<string, ReadingBlock>();
  for (const c of changes) {
    if (!blockable(c)) {
      rest.push(c);
      continue;
    }
    const p = c.payload as { runId: string; timeS: number; pH: number | null; mV: number | null };
    let b = blocks.get(p.runId);
    if (!b) blocks.set(p.runId, (b = { runId: p.runId, ids: [], seqs: [], recordedAt: [], timeS: [], pH: [], mV: [] }));
    b.ids.push(c.id);
    b.seqs.push(c.seq);
    b.recordedAt.push(c.recordedAt);
    b.timeS.push(p.timeS);
    b.pH.push(p.pH);
    b.mV.push(p.mV);
  }
  return blocks.size ? { changes: rest, readings: [...blocks.values()] } : { changes: rest };
}
function bytesOf(c: Change): number {
  return c.kind === 'reading' ? READING_BYTES : utf8Length(JSON.stringify(c));
}

function utf8Length(s: string): number {
  let n = 0;
  for (let i = 0; i < s.length; i++) {
    const u = s.charCodeAt(i);
    // A surrogate pair (4 bytes) counts 2 + 2 here.
    n += u < 0x80 ? 1 : u < 0x800 ? 2 : u >= 0xd800 && u <= 0xdfff ? 2 : 3;
  }
  return n;
}
