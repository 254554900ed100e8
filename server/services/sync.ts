import crypto from 'node:crypto';
import type { z } from 'zod';
import {
  CLOCK_FLAG_MS,
  blockReading,
  changeCount,
  parsePayload,
  readingValuesOk,
  payloadSchemas,
  type Change,
  type ChangeResult,
  type EntityKind,
  type MetaField,
  type MetaResolution,
  type PullResponse,
  type PulledChange,
  type PushRequest,
  type PushResponse,
  type ReadingBlock,
} from '../../shared/schemas/sync';
import type { Role } from '../../shared/schemas/roles';
import type { Database } from '../../db/client';
import type { Executor } from '../repos/executor';
import * as repo from '../repos/sync';
import { runWithAnalyst } from '../repos/runs-desk';
import { mailManagersOnSubmission } from './runs-review';

/**
 * Sync: push (device outbox → server) and pull (lab changes → device).
 *
 * Push rules, all inside one transaction per batch that also records the device's last accepted sequence number:
 * - The record id is the idempotency key. Inserts use ON CONFLICT DO NOTHING; a replay with the same canonical
 *   payload hash is "duplicate" (already have it), a different payload under a known id is "conflict" (409) and the
 *   stored row is left as it was.
 * - A new record whose sequence number is at or below the device's last accepted one is refused (out_of_order).
 * - A change that can never be accepted (bad payload, no permission, unknown run or target) is "rejected" with a
 *   reason; it does not stop the rest of the batch.
 * - Readings and checkpoints are never updated: corrections are new rows pointing at what they replace.
 * - Metadata edits name the run version they were made on; an edit of a field that changed on the server since then
 *   is a conflict: the value already on the server stays, the edit is kept in run_meta_history, and the response says
 *   which won. Resolution is by arrival order at the server, never by device clocks.
 * - The device's clock offset is estimated from its send time at each push; a large one flags the runs it touched.
 */

export interface SyncCaller {
  userId: string;
  roleIn(labId: string): Role | undefined;
  labs: readonly { labId: string }[];
}

export interface SyncDeps {
  database: Database;
  now: () => Date;
  /** For the submission e-mail to managers (the API's ServerContext has both); without them no mail is written. */
  publicUrl?: string;
  mailNudge?: () => void;
}

/** NOTIFY channel of the live hub; payload "runId:seq". */
export const LIVE_CHANNEL = 'halfmark_live';

const WRITE_ROLES: readonly Role[] = ['analyst', 'manager'];

/**
 * JSON with object keys sorted at every level, so equal payloads hash equally whatever the key order. Stored hashes
 * depend on every byte of it: keep the output exactly as it is (a hole in an array is empty, an undefined member left
 * out). Written as loops because it runs once per change of every push.
 */
export function canonicalJson(value: unknown): string {
  if (value === null || typeof value !== 'object') return JSON.stringify(value) ?? 'null';
  if (Array.isArray(value)) {
    let out = '[';
    for (let i = 0; i < value.length; i++) out += (i ? ',' : '') + (i in value ? canonicalJson(value[i]) : '');
    return `${out}]`;
  }
  const obj = value as Record<string, unknown>;
  const keys = Object.keys(obj);
  // A payload has a handful of keys: sorted in place by insertion, as Array.prototype.sort allocates a work array on
  // every call (garbage from every change of a push). The order is the same (code units, as sort() compares).
  if (keys.length > 16) keys.sort();
  else {
    for (let i = 1; i < keys.length; i++) {
      const k = keys[i];
      let j = i - 1;
      for (; j >= 0 && keys[j] > k; j--) keys[j + 1] = keys[j];
      keys[j + 1] = k;
    }
  }
  let out = '{';
  for (const k of keys) {
    const v = obj[k];
    if (v === undefined) continue;
    out += `${out.length > 1 ? ',' : ''}${JSON.stringify(k)}:${canonicalJson(v)}`;
  }
  return `${out}}`;
}

/**
 * canonicalJson of a parsed reading payload, written in one go: its four keys in that order, a uuid (no escapes),
 * numbers and nulls as JSON writes them. Readings are most of every push, and the general writer built about 1 kB of
 * intermediate strings per reading. Equal to canonicalJson for every parsed reading (sync.test.ts).
 */
export function readingCanonicalJson(d: Parsed<'reading'>): string {
  return readingValuesJson(d.runId, d.timeS, d.pH, d.mV);
}
const readingValuesJson = (runId: string, timeS: number, pH: number | null, mV: number | null) => `{"mV":${mV},"pH":${pH},"runId":"${runId}","timeS":${timeS}}`;

/** The stored hash of a payload as parsed by its kind's schema. */
export function payloadHash<K extends EntityKind>(kind: K, payload: Parsed<K>): string {
  return sha256Hex(`${kind}\n${kind === 'reading' ? readingCanonicalJson(payload as Parsed<'reading'>) : canonicalJson(payload)}`);
}

// Node's one-shot hash (20.12+) skips a Hash object per call; the same digest either way.
const sha256Hex: (text: string) => string =
  typeof (crypto as { hash?: unknown }).hash === 'function'
    ? (text) => (crypto as unknown as { hash(alg: string, data: string, enc: 'hex'): string }).hash('sha256', text, 'hex')
    : (text) => crypto.createHash('sha256').update(text).digest('hex');

type Parsed<K extends EntityKind> = z.infer<(typeof payloadSchemas)[K]>;

interface Item {
  change: Change;
  index: number;
  hash?: string;
  data?: unknown;
  /** seq at or below the device's last accepted: may only be a replay of a stored record. */
  replayOnly: boolean;
}

function result(c: Change, outcome: ChangeResult['outcome'], status: number, reason?: string, meta?: MetaResolution): ChangeResult {
  const r: ChangeResult = { id: c.id, seq: c.seq, outcome, status };
  if (reason) r.reason = reason;
  if (meta) r.meta = meta;
  return r;
}

function zodReason(err: z.ZodError): string {
  return err.issues.map((i) => (i.path.length ? `${i.path.join('.')}: ${i.message}` : i.message)).join('; ');
}

const dateOrNull = (ms: number | undefined) => (ms === undefined ? null : new Date(ms));

const META_COLUMN: Record<MetaField, 'notes' | 'sampleName' | 'status'> = { notes: 'notes', sampleName: 'sampleName', status: 'status' };

export async function push(deps: SyncDeps, caller: SyncCaller, req: PushRequest): Promise<PushResponse> {
  const receivedAt = deps.now();
  const clockOffsetMs = req.sentAt - receivedAt.getTime();
  const clockFlagged = Math.abs(clockOffsetMs) > CLOCK_FLAG_MS;

  return deps.database.db.transaction(async (tx) => {
    const device = await repo.lockDevice(tx, req.deviceId, caller.userId);
    // With answer 'exceptions' a plain acceptance is only counted (null here): no result object per reading.
    const listAll = req.answer !== 'exceptions';
    // In request order: the changes, then the readings of each block (numbered on from the changes).
    const results: (ChangeResult | null)[] = new Array(changeCount(req));
    let acceptedUnlisted = 0;
    const log: repo.ChangeLogRow[] = [];
    const touchedRuns = new Set<string>();
    let lastLab: string | null = null;

    // Parse every payload first; a bad one is answered here and the rest go on.
    const items: Item[] = [];
    req.changes.forEach((change, index) => {
      const parsed = parsePayload(change.kind, change.payload);
      if (!parsed.success) {
        results[index] = result(change, 'rejected', 422, zodReason(parsed.error));
        return;
      }
      items.push({ change, index, data: parsed.data, hash: payloadHash(change.kind, parsed.data), replayOnly: change.seq <= device.lastSeq });
    });
    const answer = (it: Item, outcome: ChangeResult['outcome'], status: number, reason?: string, meta?: MetaResolution) => {
      if (!listAll && outcome === 'accepted' && !meta) {
        results[it.index] = null;
        acceptedUnlisted++;
      } else results[it.index] = result(it.change, outcome, status, reason, meta);
    };
    const byKind = (k: EntityKind) => items.filter((i) => i.change.kind === k);

    /**
     * Changes under a sequence number the device already passed may only be replays: answered from what is stored
     * ("already have it" when the hash matches, 409 otherwise), a new id there is out of order. The rest are returned
     * to be inserted; ids the insert finds taken go through `settleTaken`.
     */
    async function settleReplays(table: repo.RowTable, list: Item[]) {
      const replays = list.filter((i) => i.replayOnly);
      if (replays.length) await settleTaken(table, replays, true);
      return list.filter((i) => !i.replayOnly);
    }
    async function settleTaken(table: repo.RowTable, list: Item[], replay = false) {
      const stored = await repo.storedHashes(tx, table, list.map((i) => i.change.id));
      for (const it of list) {
        if (stored.has(it.change.id)) {
          if (stored.get(it.change.id) === it.hash) answer(it, 'duplicate', 200);
          else answer(it, 'conflict', 409, 'A different record is already stored under this id; it was left unchanged.');
        } else if (replay) {
          answer(it, 'out_of_order', 409, `Sequence number ${it.change.seq} is not after ${device.lastSeq}, the last this device had accepted.`);
        } else {
          // Taken by a row of another kind: (almost) impossible with UUIDs, but never silently dropped.
          answer(it, 'conflict', 409, 'This id is already used by another record.');
        }
      }
    }

    // Runs the caller may write to: what the database has, plus runs accepted earlier in this batch.
    // One object per run, handed out as it is for each of its records (a push is thousands of one run's readings).
    const runInfo = new Map<string, { id: string; labId: string; analystId: string }>();
    const referenced = new Set<string>();
    for (const it of items) {
      const d = it.data as { runId?: string };
      if (it.change.kind === 'run') referenced.add(it.change.id);
      else if (d.runId) referenced.add(d.runId);
    }
    for (const b of req.readings ?? []) referenced.add(b.runId);
    // An approved revision is a signed record: nothing is added to or changed in it until a new revision is opened.
    const locked = new Set<string>();
    for (const r of await repo.runsForPush(tx, [...referenced])) {
      runInfo.set(r.id, { id: r.id, labId: r.labId, analystId: r.analystId });
      if (r.locked) locked.add(r.id);
    }
    let mailed = false;

    const mayWrite = (labId: string, analystId: string): string | null => {
      const role = caller.roleIn(labId);
      if (!role) return 'You are not a member of the lab of this run.';
      if (!WRITE_ROLES.includes(role)) return `A ${role} cannot record runs.`;
      if (role === 'analyst' && analystId !== caller.userId) return "An analyst can add only to their own runs.";
      return null;
    };
    /** The run of a record, checked for permission; answers the item and returns null when it cannot go in. */
    const runFor = (it: Item, runId: string) => {
      const run = runInfo.get(runId);
      if (!run) {
        answer(it, 'rejected', 404, 'The run of this record is not on the server (it was never sent, or was rejected).');
        return null;
      }
      const denied = mayWrite(run.labId, run.analystId);
      if (denied) {
        answer(it, 'rejected', 403, denied);
        return null;
      }
      if (locked.has(runId)) {
        answer(it, 'rejected', 409, 'This run is approved and locked; a manager must open a new revision before it can be changed.');
        return null;
      }
      return run;
    };
    /** Highest change-log position this batch took (readings carry theirs themselves: no change-log row). */
    let maxSeq: number | null = null;
    const logChanged = (seq: number | null) => {
      if (seq !== null) maxSeq = Math.max(maxSeq ?? 0, seq);
    };
    const inserting = async (table: repo.RowTable, rows: Parameters<typeof repo.insertIgnoringExisting>[2]) => {
      const done = await repo.insertIgnoringExisting(tx, table, rows);
      logChanged(done.maxSeq);
      return done;
    };
    const accepted = (it: Item, entity: string, recordId: string, labId: string, runId: string | null) => {
      answer(it, 'accepted', 201);
      if (entity !== 'reading') log.push({ labId, entity, recordId, runId });
      if (runId) touchedRuns.add(runId);
      lastLab = labId;
    };

    // 1. Runs.
    {
      const fresh = await settleReplays('run', byKind('run'));
      const rows: repo.RunInsert[] = [];
      const pending: Item[] = [];
      for (const it of fresh) {
        const d = it.data as Parsed<'run'>;
        const denied = mayWrite(d.labId, caller.userId);
        if (denied) {
          answer(it, 'rejected', 403, denied);
          continue;
        }
        rows.push({
          id: it.change.id,
          labId: d.labId,
          analystId: caller.userId,
          sampleName: d.sampleName,
          status: d.status,
          setup: d.setup,
          notes: d.notes,
          isDemo: d.isDemo,
          deviceCreatedAt: dateOrNull(it.change.recordedAt),
          payloadHash: it.hash,
        });
        pending.push(it);
      }
      const inserted = await inserting('run', rows);
      const taken: Item[] = [];
      for (const it of pending) {
        const d = it.data as Parsed<'run'>;
        if (inserted.has(it.change.id)) {
          runInfo.set(it.change.id, { id: it.change.id, labId: d.labId, analystId: caller.userId });
          accepted(it, 'run', it.change.id, d.labId, it.change.id);
        } else taken.push(it);
      }
      if (taken.length) await settleTaken('run', taken);
      // New runs go into the change log now, before their readings take their places: pulls meet a run first.
      logChanged(await repo.logChanges(tx, log.splice(0)));
    }

    // 2. Readings, checkpoints, run events: immutable rows, bulk inserted.
    async function rowsStage<K extends 'reading' | 'checkpoint' | 'run_event'>(kind: K, build: (it: Item, d: Parsed<K>, labId: string) => Record<string, unknown>) {
      const fresh = await settleReplays(kind, byKind(kind));
      const rows: Record<string, unknown>[] = [];
      const pending: Item[] = [];
      const pendingRuns: { id: string; labId: string }[] = [];
      for (const it of fresh) {
        const d = it.data as Parsed<K>;
        const run = runFor(it, (d as { runId: string }).runId);
        if (!run) continue;
        rows.push(build(it, d, run.labId));
        pending.push(it);
        pendingRuns.push(run);
      }
      const inserted = await inserting(kind, rows as never);
      const taken: Item[] = [];
      for (let i = 0; i < pending.length; i++) {
        const it = pending[i];
        if (inserted.has(it.change.id)) accepted(it, kind, it.change.id, pendingRuns[i].labId, pendingRuns[i].id);
        else taken.push(it);
      }
      if (taken.length) await settleTaken(kind, taken);
    }
    const common = (it: Item, labId: string) => ({
      id: it.change.id,
      labId,
      deviceRecordedAt: dateOrNull(it.change.recordedAt),
      receivedAt,
      payloadHash: it.hash,
    });
    // Readings are most of a push: their rows are written out whole (no spread of a shared part per row).
    await rowsStage('reading', (it, d, labId) => ({
      id: it.change.id,
      labId,
      deviceRecordedAt: dateOrNull(it.change.recordedAt),
      receivedAt,
      payloadHash: it.hash,
      runId: d.runId,
      kind: 'reading',
      timeS: d.timeS,
      pH: d.pH,
      mV: d.mV,
    }));
    // Readings sent in blocks: the plain new ones go in straight from the columns, with no object per reading; a
    // reading that is anything else (a bad value, a replay, an id already taken) becomes a change of its own and is
    // answered as one.
    let blockStart = req.changes.length;
    for (const b of req.readings ?? []) {
      await blockStage(b, blockStart);
      blockStart += b.ids.length;
    }
    async function blockStage(b: ReadingBlock, start: number) {
      const changeAt = (i: number) => blockReading(b, i);
      const n = b.ids.length;
      // Readings to insert from the columns (their places in the block) and their hashes; the rest as items.
      const fresh: number[] = [];
      const hashes: string[] = [];
      const replays: Item[] = [];
      for (let i = 0; i < n; i++) {
        const t = b.timeS[i];
        const pH = b.pH[i];
        const mV = b.mV[i];
        if (!readingValuesOk(t, pH, mV)) {
          // Answered as the same change sent on its own would be: the schema words the reason.
          const change = changeAt(i);
          const parsed = parsePayload('reading', change.payload);
          if (!parsed.success) {
            results[start + i] = result(change, 'rejected', 422, zodReason(parsed.error));
            continue;
          }
          // Taken with a default applied (a value left out, from a caller other than JSON): stored as parsed.
          b.timeS[i] = parsed.data.timeS;
          b.pH[i] = parsed.data.pH;
          b.mV[i] = parsed.data.mV;
        }
        const hash = sha256Hex(`reading\n${readingValuesJson(b.runId, b.timeS[i] as number, b.pH[i] as number | null, b.mV[i] as number | null)}`);
        if (b.seqs[i] <= device.lastSeq) {
          const change = changeAt(i);
          replays.push({ change, index: start + i, data: change.payload, hash, replayOnly: true });
          continue;
        }
        fresh.push(i);
        hashes.push(hash);
      }
      if (replays.length) await settleTaken('reading', replays, true);
      if (!fresh.length) return;
      const item = (k: number): Item => {
        const change = changeAt(fresh[k]);
        return { change, index: start + fresh[k], data: change.payload, hash: hashes[k], replayOnly: false };
      };
      // The run is the same for every reading of the block: checked once.
      const run = runFor(item(0), b.runId);
      if (!run) {
        const first = results[start + fresh[0]]!;
        for (let k = 1; k < fresh.length; k++) results[start + fresh[k]] = { ...first, id: b.ids[fresh[k]], seq: b.seqs[fresh[k]] };
        return;
      }
      const inserted = await repo.insertReadingCells(tx, fresh.length, {
        id: (k) => b.ids[fresh[k]],
        run_id: b.runId,
        lab_id: run.labId,
        kind: 'reading',
        time_s: (k) => b.timeS[fresh[k]] as number,
        ph: (k) => b.pH[fresh[k]] as number | null,
        mv: (k) => b.mV[fresh[k]] as number | null,
        replaces_id: null,
        reason: null,
        device_recorded_at: (k) => b.recordedAt[fresh[k]],
        received_at: receivedAt.getTime(),
        payload_hash: (k) => hashes[k],
      });
      logChanged(inserted.maxSeq);
      const taken: Item[] = [];
      let took = 0;
      for (let k = 0; k < fresh.length; k++) {
        if (!inserted.has(b.ids[fresh[k]])) taken.push(item(k));
        else if (listAll) results[start + fresh[k]] = { id: b.ids[fresh[k]], seq: b.seqs[fresh[k]], outcome: 'accepted', status: 201 };
        else {
          results[start + fresh[k]] = null;
          took++;
        }
      }
      acceptedUnlisted += took;
      if (taken.length < fresh.length) {
        touchedRuns.add(run.id);
        lastLab = run.labId;
      }
      if (taken.length) await settleTaken('reading', taken);
    }

    await rowsStage('checkpoint', (it, d, labId) => ({ ...common(it, labId), runId: d.runId, timeS: d.timeS, buretteMl: d.buretteMl }));
    await rowsStage('run_event', (it, d, labId) => ({ ...common(it, labId), runId: d.runId, kind: d.kind, timeS: d.timeS, detail: d.detail }));

    // 3. Corrections: new rows in the table of what they replace (which must be in the same run).
    {
      const list = byKind('correction');
      // Stored corrections live in readings or checkpoints; look in both for replays.
      const inReadings = await repo.storedHashes(tx, 'reading', list.map((i) => i.change.id));
      const inCheckpoints = await repo.storedHashes(tx, 'checkpoint', list.map((i) => i.change.id));
      const fresh: Item[] = [];
      for (const it of list) {
        const stored = inReadings.has(it.change.id) ? inReadings.get(it.change.id) : inCheckpoints.get(it.change.id);
        if (inReadings.has(it.change.id) || inCheckpoints.has(it.change.id)) {
          if (stored === it.hash) answer(it, 'duplicate', 200);
          else answer(it, 'conflict', 409, 'A different record is already stored under this id; it was left unchanged.');
        } else if (it.replayOnly) {
          answer(it, 'out_of_order', 409, `Sequence number ${it.change.seq} is not after ${device.lastSeq}, the last this device had accepted.`);
        } else fresh.push(it);
      }
      // In seq order, one at a time: a correction may replace a correction sent just before it.
      for (const it of fresh) {
        const d = it.data as Parsed<'correction'>;
        const run = runFor(it, d.runId);
        if (!run) continue;
        const target = (await repo.correctionTargets(tx, d.of, [d.replacesId])).get(d.replacesId);
        if (!target || target.runId !== d.runId) {
          answer(it, 'rejected', 404, `The ${d.of} this corrects is not on the server in the same run.`);
          continue;
        }
        const base = { ...common(it, run.labId), runId: d.runId, timeS: d.timeS ?? target.timeS, replacesId: d.replacesId, reason: d.reason };
        const row =
          d.of === 'reading'
            ? { ...base, kind: d.withdraw ? 'deletion' : 'correction', pH: d.withdraw ? null : (d.pH ?? null), mV: d.withdraw ? null : (d.mV ?? null) }
            : { ...base, buretteMl: d.withdraw ? null : (d.buretteMl ?? null) };
        const inserted = await inserting(d.of, [row as never]);
        if (inserted.has(it.change.id)) accepted(it, d.of, it.change.id, run.labId, run.id);
        else answer(it, 'conflict', 409, 'A different record is already stored under this id; it was left unchanged.');
      }
    }

    // 4. Metadata edits and submissions, in sequence order (each may depend on the one before).
    const sequential = items.filter((i) => i.change.kind === 'run_meta_edit' || i.change.kind === 'submission');
    for (const it of sequential) {
      if (it.change.kind === 'run_meta_edit') await metaEdit(tx, it);
      else await submission(tx, it);
    }

    async function metaEdit(t: Executor, it: Item) {
      const d = it.data as Parsed<'run_meta_edit'>;
      const stored = await repo.metaHistoryById(t, it.change.id);
      if (stored) {
        if (stored.payloadHash !== it.hash) return answer(it, 'conflict', 409, 'A different edit is already stored under this id; it was left unchanged.');
        const run = await repo.lockRun(t, d.runId);
        return answer(it, 'duplicate', 200, undefined, {
          field: d.field,
          winner: stored.outcome === 'applied' ? 'device' : 'server',
          conflict: stored.outcome === 'conflict',
          value: String(run[META_COLUMN[d.field]]),
          version: run.version,
        });
      }
      if (it.replayOnly) return answer(it, 'out_of_order', 409, `Sequence number ${it.change.seq} is not after ${device.lastSeq}.`);
      if (!runFor(it, d.runId)) return;
      const run = await repo.lockRun(t, d.runId);
      const column = META_COLUMN[d.field];
      const current = String(run[column]);
      // A device that never saw a server version edited the run as it created it: version 1.
      const base = d.baseVersion ?? 1;
      // Edits from this same device are earlier steps of the same hand (device order is causal), never rivals.
      const competing = (await repo.appliedSince(t, d.runId, d.field, base)).filter((e) => e.value !== d.value && e.deviceId !== req.deviceId);
      const conflict = competing.length > 0 && current !== d.value;
      let version = run.version;
      if (!conflict && current !== d.value) version = await repo.setRunField(t, d.runId, column, d.value, receivedAt);
      await repo.insertMetaHistory(t, {
        id: it.change.id,
        runId: d.runId,
        labId: run.labId,
        userId: caller.userId,
        deviceId: req.deviceId,
        field: d.field,
        value: d.value,
        previousValue: current,
        baseVersion: d.baseVersion,
        resultVersion: version,
        outcome: conflict ? 'conflict' : 'applied',
        deviceRecordedAt: dateOrNull(it.change.recordedAt),
        receivedAt,
        payloadHash: it.hash!,
      });
      answer(it, 'accepted', 201, undefined, {
        field: d.field,
        winner: conflict ? 'server' : 'device',
        conflict,
        value: conflict ? current : d.value,
        version,
      });
      log.push({ labId: run.labId, entity: 'run_meta_edit', recordId: it.change.id, runId: d.runId });
      log.push({ labId: run.labId, entity: 'run', recordId: d.runId, runId: d.runId });
      touchedRuns.add(d.runId);
      lastLab = run.labId;
    }

    async function submission(t: Executor, it: Item) {
      const d = it.data as Parsed<'submission'>;
      const stored = (await repo.storedHashes(t, 'submission', [it.change.id])).get(it.change.id);
      if (stored !== undefined) {
        return stored === it.hash ? answer(it, 'duplicate', 200) : answer(it, 'conflict', 409, 'A different submission is already stored under this id.');
      }
      if (it.replayOnly) return answer(it, 'out_of_order', 409, `Sequence number ${it.change.seq} is not after ${device.lastSeq}.`);
      const run = runFor(it, d.runId);
      if (!run) return;
      await repo.insertSubmission(t, {
        id: it.change.id,
        runId: d.runId,
        labId: run.labId,
        userId: caller.userId,
        note: d.note,
        deviceRecordedAt: dateOrNull(it.change.recordedAt),
        receivedAt,
        payloadHash: it.hash!,
      });
      await repo.setRunField(t, d.runId, 'status', 'submitted', receivedAt);
      if (deps.publicUrl) {
        const named = await runWithAnalyst(t, d.runId);
        await mailManagersOnSubmission({ publicUrl: deps.publicUrl }, t, {
          labId: run.labId,
          runId: d.runId,
          sampleName: named.run.sampleName,
          analystName: named.analystName,
          note: d.note ?? '',
        });
        mailed = true;
      }
      answer(it, 'accepted', 201);
      log.push({ labId: run.labId, entity: 'run', recordId: d.runId, runId: d.runId });
      touchedRuns.add(d.runId);
      lastLab = run.labId;
    }

    logChanged(await repo.logChanges(tx, log));
    if (clockFlagged) await repo.flagRunClocks(tx, [...touchedRuns], req.deviceId, clockOffsetMs, receivedAt);
    if (maxSeq !== null) await repo.notifyRuns(tx, LIVE_CHANNEL, [...touchedRuns].map((r) => `${r}:${maxSeq}`));
    let lastSeq = device.lastSeq;
    if (req.changes.length) lastSeq = Math.max(lastSeq, req.changes[req.changes.length - 1].seq);
    for (const b of req.readings ?? []) lastSeq = Math.max(lastSeq, b.seqs[b.seqs.length - 1]);
    await repo.updateDevice(tx, req.deviceId, caller.userId, {
      lastSeq,
      clockOffsetMs,
      lastSyncAt: receivedAt,
      ...(lastLab ? { labId: lastLab } : {}),
    });
    const rest = { lastSeq, serverTime: receivedAt.toISOString(), clockOffsetMs, clockFlagged, readingBlocks: true, mailed };
    if (listAll) return { results: results as ChangeResult[], ...rest };
    // A change left unanswered (none should be) is neither listed nor counted: the device then settles nothing.
    return { results: results.filter((r): r is ChangeResult => r !== null), acceptedUnlisted, ...rest };
  }).then(({ mailed, ...response }) => {
    if (mailed) deps.mailNudge?.();
    return response;
  });
}

// ---------- pull ----------

type Loader = (db: Executor, ids: string[]) => Promise<Map<string, unknown>>;
const iso = (d: Date | null) => (d ? d.toISOString() : null);

/** How each entity of the change log is loaded for a pull; other areas add theirs (calibration, titrant). */
export const pullLoaders = new Map<string, Loader>([
  [
    'run',
    async (db, ids) =>
      new Map(
        (await repo.runsWithFlags(db, ids)).map(({ run: r, clockOffsetMs }) => [
          r.id,
          {
            id: r.id,
            labId: r.labId,
            analystId: r.analystId,
            sampleName: r.sampleName,
            status: r.status,
            setup: r.setup,
            notes: r.notes,
            version: r.version,
            isDemo: r.isDemo,
            createdAt: r.createdAt.toISOString(),
            updatedAt: r.updatedAt.toISOString(),
            clockOffsetMs: clockOffsetMs === null ? null : Number(clockOffsetMs),
          },
        ]),
      ),
  ],
  [
    'reading',
    async (db, ids) =>
      new Map(
        (await repo.readingsByIds(db, ids)).map((r) => [
          r.id,
          {
            id: r.id,
            runId: r.runId,
            labId: r.labId,
            kind: r.kind,
            timeS: r.timeS,
            pH: r.pH,
            mV: r.mV,
            replacesId: r.replacesId,
            reason: r.reason,
            deviceRecordedAt: iso(r.deviceRecordedAt),
            receivedAt: r.receivedAt.toISOString(),
          },
        ]),
      ),
  ],
  [
    'checkpoint',
    async (db, ids) =>
      new Map(
        (await repo.checkpointsByIds(db, ids)).map((c) => [
          c.id,
          {
            id: c.id,
            runId: c.runId,
            labId: c.labId,
            timeS: c.timeS,
            buretteMl: c.buretteMl,
            replacesId: c.replacesId,
            reason: c.reason,
            deviceRecordedAt: iso(c.deviceRecordedAt),
            receivedAt: c.receivedAt.toISOString(),
          },
        ]),
      ),
  ],
  [
    'run_event',
    async (db, ids) =>
      new Map(
        (await repo.runEventsByIds(db, ids)).map((e) => [
          e.id,
          { id: e.id, runId: e.runId, labId: e.labId, kind: e.kind, timeS: e.timeS, detail: e.detail, receivedAt: e.receivedAt.toISOString() },
        ]),
      ),
  ],
  [
    'run_meta_edit',
    async (db, ids) =>
      new Map(
        (await repo.metaEditsByIds(db, ids)).map((m) => [
          m.id,
          {
            id: m.id,
            runId: m.runId,
            field: m.field,
            value: m.value,
            previousValue: m.previousValue,
            baseVersion: m.baseVersion,
            resultVersion: m.resultVersion,
            outcome: m.outcome,
            userId: m.userId,
            receivedAt: m.receivedAt.toISOString(),
          },
        ]),
      ),
  ],
]);

/**
 * What changed in the caller's labs after `cursor`, oldest first, each with the record's current state.
 * A record changed several times in one page appears once, at its latest position.
 */
export async function pull(deps: SyncDeps, caller: SyncCaller, q: { cursor: number; limit: number; runId?: string }): Promise<PullResponse> {
  const db = deps.database.db;
  const labIds = caller.labs.map((l) => l.labId);
  const rows = await repo.changesSince(db, { labIds, cursor: q.cursor, limit: q.limit + 1, runId: q.runId });
  const more = rows.length > q.limit;
  const page = rows.slice(0, q.limit);
  const latest = new Map<string, (typeof page)[number]>();
  for (const r of page) latest.set(`${r.entity}:${r.recordId}`, r);
  const byEntity = new Map<string, string[]>();
  for (const r of latest.values()) byEntity.set(r.entity, [...(byEntity.get(r.entity) ?? []), r.recordId]);
  const loaded = new Map<string, Map<string, unknown>>();
  for (const [entity, ids] of byEntity) {
    const loader = pullLoaders.get(entity);
    if (loader) loaded.set(entity, await loader(db, ids));
  }
  const changes: PulledChange[] = [];
  for (const r of [...latest.values()].sort((a, b) => a.seq - b.seq)) {
    const record = loaded.get(r.entity)?.get(r.recordId);
    if (record !== undefined) changes.push({ seq: r.seq, entity: r.entity, record } as PulledChange);
  }
  return { changes, cursor: page.length ? page[page.length - 1].seq : q.cursor, more };
}
