import { createHash } from 'node:crypto';
import { count, eq, inArray } from 'drizzle-orm';
import { v7 } from 'uuid';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Database } from '../../db/client';
import { checkpoints, devices, readings, runClockFlags, runMetaHistory, runs } from '../../db/schema';
import { CLOCK_FLAG_MS, parsePushRequest, payloadSchemas, pushRequestSchema } from '../../shared/schemas/sync';
import { closeTemplate, testDatabase } from '../testing/db';
import fc from 'fast-check';
import { canonicalJson, payloadHash, pull, push, readingCanonicalJson } from './sync';
import { packPush } from '../../src/sync/engine';
import { fakeDevice, syncWorld } from './sync.testkit';

let database: Database;
let w: Awaited<ReturnType<typeof syncWorld>>;

beforeAll(async () => {
  database = await testDatabase();
  w = await syncWorld(database);
}, 300_000);
afterAll(async () => {
  await database.close();
  await closeTemplate();
});

const runPayload = (labId: string, extra: object = {}) => ({ labId, sampleName: 'KHP demo sample', setup: { titrant: 'NaOH 0.1 M' }, ...extra });

describe('canonical payload hash', () => {
  it('ignores key order but not values', () => {
    expect(canonicalJson({ b: 1, a: { d: [1, 2], c: null } })).toBe(canonicalJson({ a: { c: null, d: [1, 2] }, b: 1 }));
    expect(canonicalJson({ a: 1 })).not.toBe(canonicalJson({ a: 2 }));
  });

  // Stored payload hashes depend on every byte: the output must stay that of the first implementation (kept here).
  const firstCanonicalJson = (value: unknown): string => {
    if (value === null || typeof value !== 'object') return JSON.stringify(value) ?? 'null';
    if (Array.isArray(value)) return `[${value.map(firstCanonicalJson).join(',')}]`;
    const obj = value as Record<string, unknown>;
    const keys = Object.keys(obj)
      .filter((k) => obj[k] !== undefined)
      .sort();
    return `{${keys.map((k) => `${JSON.stringify(k)}:${firstCanonicalJson(obj[k])}`).join(',')}}`;
  };

  it('writes exactly what the first implementation wrote, for any JSON and for undefined members', () => {
    fc.assert(
      fc.property(fc.oneof(fc.jsonValue(), fc.object({ values: [fc.constant(undefined), fc.integer(), fc.string()] })), (v) => {
        expect(canonicalJson(v)).toBe(firstCanonicalJson(v));
      }),
      { numRuns: 500 },
    );
    // eslint-disable-next-line no-sparse-arrays
    expect(canonicalJson([1, , 2])).toBe(firstCanonicalJson([1, , 2]));
    // Key order by code units, for few keys and for many (sorted two ways), with capitals, accents and astral keys.
    const odd = { é: 1, Z: 2, a: 3, '\u{1F600}': 4, '': 5, '\uFFFF': 6, aa: 7, A: 8 };
    expect(canonicalJson(odd)).toBe(firstCanonicalJson(odd));
    const many = Object.fromEntries(Array.from({ length: 40 }, (_, i) => [`k${(i * 7919) % 40}${i % 3 ? 'x' : ''}`, i]));
    expect(canonicalJson(many)).toBe(firstCanonicalJson(many));
    expect(canonicalJson({ ...odd, ...many })).toBe(firstCanonicalJson({ ...odd, ...many }));
  });

  it('a reading payload is written and hashed exactly as the general writer does', () => {
    const value = (min: number, max: number) => fc.oneof(fc.constant(null), fc.constant(undefined), fc.constantFrom(min, max, 0, -0, 1e-7), fc.double({ min, max, noNaN: true }));
    fc.assert(
      fc.property(fc.uuid({ version: [4, 7] }), fc.double({ min: 0, max: 604_800, noNaN: true }), value(-2, 16), value(-2000, 2000), (runId, timeS, pH, mV) => {
        const parsed = payloadSchemas.reading.safeParse({ runId, timeS, pH, mV });
        if (!parsed.success) return;
        expect(readingCanonicalJson(parsed.data)).toBe(firstCanonicalJson(parsed.data));
        expect(payloadHash('reading', parsed.data)).toBe(createHash('sha256').update(`reading\n${firstCanonicalJson(parsed.data)}`).digest('hex'));
      }),
      { numRuns: 1000 },
    );
  });
});

describe('push', () => {
  it('accepts a run and its readings, answers a replay "duplicate" and a changed payload 409, stored row untouched', async () => {
    const analyst = await w.member(w.labA.id, 'analyst');
    const dev = fakeDevice();
    const run = dev.change('run', runPayload(w.labA.id));
    const r1 = dev.change('reading', { runId: run.id, timeS: 12.5, pH: 3.41 });
    const first = await push(w.deps, analyst, dev.batch([run, r1]));
    expect(first.results.map((r) => r.outcome)).toEqual(['accepted', 'accepted']);
    expect(first.lastSeq).toBe(2);

    const replay = await push(w.deps, analyst, dev.batch([run, r1]));
    expect(replay.results.map((r) => r.outcome)).toEqual(['duplicate', 'duplicate']);

    const changed = { ...r1, payload: { runId: run.id, timeS: 12.5, pH: 9.99 } };
    const again = await push(w.deps, analyst, dev.batch([changed]));
    expect(again.results[0]).toMatchObject({ outcome: 'conflict', status: 409 });
    const [stored] = await database.db.select().from(readings).where(eq(readings.id, r1.id));
    expect(stored.pH).toBe(3.41);
  });

  it('rejects a bad change with its reason and still takes the rest of the batch', async () => {
    const analyst = await w.member(w.labA.id, 'analyst');
    const dev = fakeDevice();
    const run = dev.change('run', runPayload(w.labA.id));
    const bad = dev.change('reading', { runId: run.id, timeS: 3, pH: 42 });
    const noValue = dev.change('reading', { runId: run.id, timeS: 4 });
    const good = dev.change('reading', { runId: run.id, timeS: 5, pH: 4.2 });
    const orphan = dev.change('reading', { runId: v7(), timeS: 6, pH: 4.3 });
    const res = await push(w.deps, analyst, dev.batch([run, bad, noValue, good, orphan]));
    expect(res.results.map((r) => r.outcome)).toEqual(['accepted', 'rejected', 'rejected', 'accepted', 'rejected']);
    expect(res.results[1].reason).toMatch(/pH/);
    expect(res.results[2].reason).toMatch(/pH or an mV/);
    expect(res.results[4]).toMatchObject({ status: 404 });
    expect(res.lastSeq).toBe(5);
  });

  it('refuses writes a role does not allow: a viewer, another lab, an analyst on a colleague’s run', async () => {
    const viewer = await w.member(w.labA.id, 'viewer');
    const analyst = await w.member(w.labA.id, 'analyst');
    const colleague = await w.member(w.labA.id, 'analyst');
    const dev = fakeDevice();
    const res = await push(w.deps, viewer, dev.batch([dev.change('run', runPayload(w.labA.id))]));
    expect(res.results[0]).toMatchObject({ outcome: 'rejected', status: 403 });
    const other = await push(w.deps, analyst, dev.batch([dev.change('run', runPayload(w.labB.id))]));
    expect(other.results[0]).toMatchObject({ outcome: 'rejected', status: 403 });

    const d2 = fakeDevice();
    const run = d2.change('run', runPayload(w.labA.id));
    await push(w.deps, analyst, d2.batch([run]));
    const d3 = fakeDevice();
    const sneak = await push(w.deps, colleague, d3.batch([d3.change('reading', { runId: run.id, timeS: 1, pH: 7 })]));
    expect(sneak.results[0]).toMatchObject({ outcome: 'rejected', status: 403 });
  });

  it('refuses a new record under a sequence number the device has already passed', async () => {
    const analyst = await w.member(w.labA.id, 'analyst');
    const devId = v7();
    const run = { id: v7(), kind: 'run' as const, seq: 10, recordedAt: Date.now(), payload: runPayload(w.labA.id) };
    expect((await push(w.deps, analyst, { deviceId: devId, sentAt: Date.now(), changes: [run] })).lastSeq).toBe(10);
    const late = { id: v7(), kind: 'reading' as const, seq: 7, recordedAt: Date.now(), payload: { runId: run.id, timeS: 1, pH: 5 } };
    const res = await push(w.deps, analyst, { deviceId: devId, sentAt: Date.now(), changes: [late] });
    expect(res.results[0]).toMatchObject({ outcome: 'out_of_order', status: 409 });
    expect(res.lastSeq).toBe(10);
    expect(await database.db.select().from(readings).where(eq(readings.id, late.id))).toEqual([]);
    // Within one batch, decreasing numbers do not pass validation at all.
    const parsed = pushRequestSchema.safeParse({ deviceId: devId, sentAt: 1, changes: [{ ...run, seq: 12 }, { ...late, seq: 11 }] });
    expect(parsed.success).toBe(false);
  });

  it('keeps readings immutable: a correction and a withdrawal are new rows pointing at the original', async () => {
    const analyst = await w.member(w.labA.id, 'analyst');
    const dev = fakeDevice();
    const run = dev.change('run', runPayload(w.labA.id));
    const r = dev.change('reading', { runId: run.id, timeS: 30, pH: 5.5 });
    const c = dev.change('checkpoint', { runId: run.id, timeS: 31, buretteMl: 12.3 });
    const fix = dev.change('correction', { of: 'reading', runId: run.id, replacesId: r.id, reason: 'typed "5.5", for 5.05 {sic} \\ NULL', pH: 5.05 });
    const back = dev.change('correction', { of: 'checkpoint', runId: run.id, replacesId: c.id, reason: 'read the wrong mark', withdraw: true });
    const wrongRun = dev.change('correction', { of: 'reading', runId: v7(), replacesId: r.id, reason: 'x', pH: 1 });
    const res = await push(w.deps, analyst, dev.batch([run, r, c, fix, back, wrongRun]));
    expect(res.results.map((x) => x.outcome)).toEqual(['accepted', 'accepted', 'accepted', 'accepted', 'accepted', 'rejected']);
    const rows = await database.db.select().from(readings).where(eq(readings.runId, run.id));
    expect(rows.find((x) => x.id === r.id)?.pH).toBe(5.5);
    expect(rows.find((x) => x.id === fix.id)).toMatchObject({ kind: 'correction', replacesId: r.id, pH: 5.05, timeS: 30, reason: 'typed "5.5", for 5.05 {sic} \\ NULL' });
    const cps = await database.db.select().from(checkpoints).where(eq(checkpoints.runId, run.id));
    expect(cps.find((x) => x.id === back.id)).toMatchObject({ buretteMl: null, replacesId: c.id });
    expect(cps.find((x) => x.id === c.id)?.buretteMl).toBe(12.3);
  });
});

describe("answer: 'exceptions'", () => {
  it('lists only what was not simply accepted, in request order, and counts the rest', async () => {
    const analyst = await w.member(w.labA.id, 'analyst');
    const dev = fakeDevice();
    const run = dev.change('run', runPayload(w.labA.id));
    const r1 = dev.change('reading', { runId: run.id, timeS: 1, pH: 4.01 });
    await push(w.deps, analyst, dev.batch([run, r1]));
    const [{ version }] = await database.db.select({ version: runs.version }).from(runs).where(eq(runs.id, run.id));
    const fresh = [2, 3, 4].map((t) => dev.change('reading', { runId: run.id, timeS: t, pH: 4 + t / 100 }));
    const bad = dev.change('reading', { runId: run.id, timeS: 5, pH: 99 });
    const edit = dev.change('run_meta_edit', { runId: run.id, field: 'notes', value: 'rinsed', baseVersion: version });
    const changed = { ...r1, payload: { runId: run.id, timeS: 1, pH: 9.99 } };
    const req = { ...dev.batch([fresh[0], bad, fresh[1], edit, fresh[2]]), answer: 'exceptions' as const };
    const res = await push(w.deps, analyst, req);
    expect(res.results.map((r) => [r.id, r.outcome])).toEqual([
      [bad.id, 'rejected'],
      [edit.id, 'accepted'],
    ]);
    expect(res.results[1].meta).toMatchObject({ winner: 'device', value: 'rinsed' });
    expect(res.acceptedUnlisted).toBe(3);
    expect(await database.db.select({ n: count() }).from(readings).where(inArray(readings.id, fresh.map((f) => f.id)))).toEqual([{ n: 3 }]);

    // A replay of the same batch: nothing was accepted now, every change is listed.
    const again = await push(w.deps, analyst, req);
    expect(again.results.map((r) => r.outcome)).toEqual(['duplicate', 'rejected', 'duplicate', 'duplicate', 'duplicate']);
    expect(again.acceptedUnlisted).toBe(0);
    // A conflict is listed too; without the field the answer stays one result per change.
    const clash = await push(w.deps, analyst, { ...dev.batch([changed]), answer: 'exceptions' });
    expect(clash.results).toMatchObject([{ id: r1.id, outcome: 'conflict', status: 409 }]);
    const full = await push(w.deps, analyst, dev.batch([dev.change('reading', { runId: run.id, timeS: 6, pH: 4.2 })]));
    expect(full.results.map((r) => r.outcome)).toEqual(['accepted']);
    expect(full.acceptedUnlisted).toBeUndefined();
  });
});

describe('replays of one batch', () => {
  async function batchOf(n: number) {
    const analyst = await w.member(w.labA.id, 'analyst');
    const dev = fakeDevice();
    const run = dev.change('run', runPayload(w.labA.id));
    const rs = Array.from({ length: n }, (_, i) => dev.change('reading', { runId: run.id, timeS: i, pH: 3 + i / 100 }));
    return { analyst, batch: dev.batch([run, ...rs]), ids: rs.map((r) => r.id), runId: run.id };
  }
  const rowsPerId = async (ids: string[]) =>
    (await database.db.select({ n: count() }).from(readings).where(inArray(readings.id, ids)))[0].n;

  it('in sequence: exactly one row per id, later replays all "duplicate"', async () => {
    const { analyst, batch, ids } = await batchOf(50);
    const outcomes = [];
    for (let i = 0; i < 4; i++) outcomes.push((await push(w.deps, analyst, batch)).results.map((r) => r.outcome));
    expect(outcomes[0].every((o) => o === 'accepted')).toBe(true);
    for (const o of outcomes.slice(1)) expect(o.every((x) => x === 'duplicate')).toBe(true);
    expect(await rowsPerId(ids)).toBe(50);
  });

  it('a batch mixing stored readings (sent before by another device) with new ones: each answered for itself, pulled once', async () => {
    const { analyst, batch, ids, runId } = await batchOf(5);
    expect((await push(w.deps, analyst, batch)).results.every((r) => r.outcome === 'accepted')).toBe(true);
    const other = fakeDevice();
    const sent = batch.changes.slice(1);
    const again = sent.slice(0, 2).map((c) => other.change('reading', c.payload, { id: c.id }));
    const changed = other.change('reading', { ...(sent[2].payload as object), pH: 9.99 }, { id: sent[2].id });
    const fresh = [other.change('reading', { runId, timeS: 100, pH: 7 }), other.change('reading', { runId, timeS: 101, pH: 7.1 })];
    const res = await push(w.deps, analyst, other.batch([again[0], fresh[0], changed, again[1], fresh[1]]));
    expect(res.results.map((r) => r.outcome)).toEqual(['duplicate', 'accepted', 'conflict', 'duplicate', 'accepted']);
    expect(await rowsPerId([...ids, ...fresh.map((c) => c.id)])).toBe(7);
    const [kept] = await database.db.select().from(readings).where(eq(readings.id, sent[2].id));
    expect(kept.pH).toBe((sent[2].payload as { pH: number }).pH);
    const pulled = await pull(w.deps, analyst, { cursor: 0, limit: 5000, runId });
    const readingIds = pulled.changes.filter((c) => c.entity === 'reading').map((c) => (c.record as { id: string }).id);
    expect(readingIds.sort()).toEqual([...ids, ...fresh.map((c) => c.id)].sort());
  });

  // The six pushes are started together. On PGlite (one connection) their transactions take turns; on a PostgreSQL
  // server (TEST_DATABASE_URL, a pool of 5) they overlap, and the database's uniqueness must settle who wins.
  it('six pushes of the same 50-reading batch started at once: exactly one row per id, each id accepted by one push only', async () => {
    const { analyst, batch, ids, runId } = await batchOf(50);
    const all = await Promise.all(Array.from({ length: 6 }, () => push(w.deps, analyst, batch)));
    const acceptedPerId = new Map<string, number>();
    for (const res of all) for (const r of res.results) if (r.outcome === 'accepted') acceptedPerId.set(r.id, (acceptedPerId.get(r.id) ?? 0) + 1);
    expect([...acceptedPerId.values()].every((n) => n === 1)).toBe(true);
    expect(acceptedPerId.size).toBe(51);
    for (const res of all) expect(res.results.every((r) => r.outcome === 'accepted' || r.outcome === 'duplicate')).toBe(true);
    expect(await rowsPerId(ids)).toBe(50);
    expect((await database.db.select().from(runs).where(eq(runs.id, runId))).length).toBe(1);
  });
});

describe('readings in blocks', () => {
  /** A run and its readings: the run as a change, the readings as one block (as a device sends them). */
  async function blockBatch(n: number, values = (i: number) => ({ timeS: i, pH: 3 + i / 100 })) {
    const analyst = await w.member(w.labA.id, 'analyst');
    const dev = fakeDevice();
    const run = dev.change('run', runPayload(w.labA.id));
    const rs = Array.from({ length: n }, (_, i) => dev.change('reading', Object.assign({ runId: run.id, mV: null, pH: null }, values(i))));
    const packed = packPush([run, ...rs]);
    return { analyst, dev, run, rs, req: { deviceId: dev.id, sentAt: Date.now(), ...packed } };
  }

  it('stores the same rows as one by one: answered per reading in request order, a replay either way "duplicate"', async () => {
    const { analyst, dev, run, rs, req } = await blockBatch(30);
    expect(req.changes.map((c) => c.id)).toEqual([run.id]);
    expect(req.readings).toHaveLength(1);
    const res = await push(w.deps, analyst, req);
    expect(res.results.map((r) => [r.id, r.outcome])).toEqual([run, ...rs].map((c) => [c.id, 'accepted']));
    expect(res.lastSeq).toBe(rs.at(-1)!.seq);
    const rows = await database.db.select().from(readings).where(inArray(readings.id, rs.map((r) => r.id)));
    expect(rows).toHaveLength(30);
    for (const r of rs) {
      const row = rows.find((x) => x.id === r.id)!;
      const p = r.payload as { timeS: number; pH: number };
      expect(row).toMatchObject({ runId: run.id, labId: w.labA.id, kind: 'reading', timeS: p.timeS, pH: p.pH, mV: null, payloadHash: payloadHash('reading', p as never) });
      expect(row.deviceRecordedAt?.getTime()).toBe(r.recordedAt);
    }
    // The same readings one by one, and the block again: already there.
    const oneByOne = await push(w.deps, analyst, dev.batch([run, ...rs]));
    expect(oneByOne.results.every((r) => r.outcome === 'duplicate')).toBe(true);
    const again = await push(w.deps, analyst, { ...req, answer: 'exceptions' });
    expect(again.results.map((r) => r.outcome)).toEqual(Array(31).fill('duplicate'));
    expect(again.acceptedUnlisted).toBe(0);
    // A different value under a stored id, in a block: 409, the stored row untouched.
    const changed = packPush([{ ...rs[3], payload: { ...(rs[3].payload as object), pH: 9.99 } }]);
    const clash = await push(w.deps, analyst, { deviceId: dev.id, sentAt: Date.now(), ...changed });
    expect(clash.results).toMatchObject([{ id: rs[3].id, outcome: 'conflict', status: 409 }]);
    const [kept] = await database.db.select().from(readings).where(eq(readings.id, rs[3].id));
    expect(kept.pH).toBe((rs[3].payload as { pH: number }).pH);
  });

  it('answers each reading for itself: bad values rejected with the reason, the rest of the block stored', async () => {
    const bad: Record<number, object> = { 2: { pH: 42 }, 5: { pH: null, mV: null }, 7: { timeS: -1 }, 8: { mV: 2500 } };
    const { analyst, rs, req } = await blockBatch(10, (i) => ({ timeS: i, pH: 4 + i / 10, ...bad[i] }));
    const res = await push(w.deps, analyst, { ...req, answer: 'exceptions' });
    expect(res.results.map((r) => [r.id, r.outcome, r.status])).toEqual([2, 5, 7, 8].map((i) => [rs[i].id, 'rejected', 422]));
    expect(res.results[0].reason).toMatch(/pH/);
    expect(res.results[1].reason).toMatch(/pH or an mV/);
    expect(res.results[2].reason).toMatch(/timeS/);
    expect(res.results[3].reason).toMatch(/mV/);
    expect(res.acceptedUnlisted).toBe(7);
    const stored = await database.db.select({ id: readings.id }).from(readings).where(inArray(readings.id, rs.map((r) => r.id)));
    expect(stored.map((r) => r.id).sort()).toEqual(rs.filter((_, i) => !bad[i]).map((r) => r.id).sort());
  });

  it('refuses a block on a run the caller may not write or the server does not have, and readings under passed numbers', async () => {
    const { analyst, run, req } = await blockBatch(3);
    await push(w.deps, analyst, { ...req, readings: undefined });
    // A colleague's device sends readings for that run; another device sends a run the server never saw.
    const colleague = await w.member(w.labA.id, 'analyst');
    const d2 = fakeDevice();
    const theirs = packPush([1, 2].map((t) => d2.change('reading', { runId: run.id, timeS: t, pH: 5, mV: null })));
    const denied = await push(w.deps, colleague, { deviceId: d2.id, sentAt: Date.now(), ...theirs });
    expect(denied.results.map((r) => [r.outcome, r.status])).toEqual([['rejected', 403], ['rejected', 403]]);
    const d3 = fakeDevice();
    const orphan = packPush([1, 2, 3].map((t) => d3.change('reading', { runId: v7(), timeS: t, pH: 5, mV: null })));
    const unknown = await push(w.deps, analyst, { deviceId: d3.id, sentAt: Date.now(), ...orphan });
    expect(unknown.results.map((r) => r.status)).toEqual([404, 404, 404]);
    expect(new Set(unknown.results.map((r) => r.id)).size).toBe(3);
    // The first push's device has passed seq 1 (its run): new readings numbered at or below it are out of order.
    const late = packPush([{ id: v7(), kind: 'reading', seq: 1, recordedAt: Date.now(), payload: { runId: run.id, timeS: 9, pH: 5, mV: null } }]);
    const res = await push(w.deps, analyst, { deviceId: req.deviceId, sentAt: Date.now(), ...late });
    expect(res.results).toMatchObject([{ outcome: 'out_of_order', status: 409 }]);
    // Its readings, sent now, go in.
    const ok = await push(w.deps, analyst, { ...req, changes: [] });
    expect(ok.results.map((r) => r.outcome)).toEqual(['accepted', 'accepted', 'accepted']);
  });

  it('six pushes of the same block started at once: exactly one row per id, each accepted by one push only', async () => {
    const { analyst, rs, req } = await blockBatch(50);
    const all = await Promise.all(Array.from({ length: 6 }, () => push(w.deps, analyst, req)));
    const acceptedPerId = new Map<string, number>();
    for (const res of all) for (const r of res.results) if (r.outcome === 'accepted') acceptedPerId.set(r.id, (acceptedPerId.get(r.id) ?? 0) + 1);
    expect(acceptedPerId.size).toBe(51);
    expect([...acceptedPerId.values()].every((k) => k === 1)).toBe(true);
    for (const res of all) expect(res.results.every((r) => r.outcome === 'accepted' || r.outcome === 'duplicate')).toBe(true);
    expect((await database.db.select({ n: count() }).from(readings).where(inArray(readings.id, rs.map((r) => r.id))))[0].n).toBe(50);
  });

  it('the envelope: a sequence number or an id used twice in a push, or columns of unequal length, refuse the whole request', async () => {
    const { run, rs, req } = await blockBatch(3);
    expect(pushRequestSchema.safeParse(req).success).toBe(true);
    expect(pushRequestSchema.safeParse({ ...req, changes: [{ ...run, seq: rs[1].seq }] }).success).toBe(false);
    // One id twice: in a block and in the changes, or twice in the changes (one of the two would go unstored).
    const sameId = pushRequestSchema.safeParse({ ...req, changes: [{ ...run, id: rs[2].id }] });
    expect(sameId.success).toBe(false);
    expect(sameId.error?.issues[0].message).toMatch(/used twice/);
    const twice = { ...rs[0], seq: rs[2].seq + 1, payload: { ...(rs[0].payload as object), pH: 5.5 } };
    expect(pushRequestSchema.safeParse({ deviceId: req.deviceId, sentAt: 1, changes: [rs[0], twice] }).success).toBe(false);
    expect(() => parsePushRequest({ deviceId: req.deviceId, sentAt: 1, changes: [rs[0], twice] })).toThrow(/used twice/);
    const b = req.readings![0];
    expect(pushRequestSchema.safeParse({ ...req, readings: [{ ...b, pH: b.pH.slice(1) }] }).success).toBe(false);
    expect(pushRequestSchema.safeParse({ ...req, readings: [{ ...b, seqs: [...b.seqs].reverse() }] }).success).toBe(false);
    expect(pushRequestSchema.safeParse({ ...req, readings: [b, b] }).success).toBe(false);
    expect(pushRequestSchema.safeParse({ ...req, changes: [], readings: [] }).success).toBe(false);
  });
});

describe('editable metadata', () => {
  it('two devices edit the same run’s notes offline: the first to arrive wins, the other is kept in history, both told', async () => {
    const analyst = await w.member(w.labA.id, 'analyst');
    const phone = fakeDevice();
    const tablet = fakeDevice();
    const run = phone.change('run', runPayload(w.labA.id, { notes: 'start' }));
    await push(w.deps, analyst, phone.batch([run]));
    const [{ version }] = await database.db.select({ version: runs.version }).from(runs).where(eq(runs.id, run.id));

    const a = phone.change('run_meta_edit', { runId: run.id, field: 'notes', value: 'bubble in the burette tip', baseVersion: version });
    const b = tablet.change('run_meta_edit', { runId: run.id, field: 'notes', value: 'electrode rinsed twice', baseVersion: version });
    const ra = await push(w.deps, analyst, phone.batch([a]));
    const rb = await push(w.deps, analyst, tablet.batch([b]));
    expect(ra.results[0].meta).toMatchObject({ winner: 'device', conflict: false, value: 'bubble in the burette tip', version: version + 1 });
    expect(rb.results[0].meta).toMatchObject({ winner: 'server', conflict: true, value: 'bubble in the burette tip', version: version + 1 });

    const hist = await database.db.select().from(runMetaHistory).where(eq(runMetaHistory.runId, run.id));
    expect(hist.map((h) => [h.value, h.outcome]).sort()).toEqual([
      ['bubble in the burette tip', 'applied'],
      ['electrode rinsed twice', 'conflict'],
    ]);
    // The colleague who lost sees it when pulling: the conflicting edit is a change of its own.
    const pulled = await pull(w.deps, analyst, { cursor: 0, limit: 5000, runId: run.id });
    const edits = pulled.changes.filter((c) => c.entity === 'run_meta_edit').map((c) => (c.record as { outcome: string }).outcome);
    expect(edits.sort()).toEqual(['applied', 'conflict']);

    // An edit on top of the new version goes in; a different field never conflicts with notes.
    const c = tablet.change('run_meta_edit', { runId: run.id, field: 'notes', value: 'electrode rinsed twice; bubble cleared', baseVersion: version + 1 });
    const s = tablet.change('run_meta_edit', { runId: run.id, field: 'sampleName', value: 'KHP lot 7', baseVersion: version });
    const rc = await push(w.deps, analyst, tablet.batch([c, s]));
    expect(rc.results.map((r) => r.meta?.winner)).toEqual(['device', 'device']);
    const [final] = await database.db.select().from(runs).where(eq(runs.id, run.id));
    expect(final).toMatchObject({ notes: 'electrode rinsed twice; bubble cleared', sampleName: 'KHP lot 7', version: version + 3 });
  });

  it('a device cannot set review statuses', async () => {
    const analyst = await w.member(w.labA.id, 'analyst');
    const dev = fakeDevice();
    const run = dev.change('run', runPayload(w.labA.id));
    const res = await push(w.deps, analyst, dev.batch([run, dev.change('run_meta_edit', { runId: run.id, field: 'status', value: 'approved', baseVersion: 1 })]));
    expect(res.results[1]).toMatchObject({ outcome: 'rejected', status: 422 });
  });
});

describe('clocks', () => {
  it('a device clock days off: accepted and ordered by server sequence as usual, the offset flagged on the run', async () => {
    const analyst = await w.member(w.labA.id, 'analyst');
    const dev = fakeDevice();
    const skew = -3 * 86_400_000;
    const deviceNow = w.nowMs() + skew;
    const run = dev.change('run', runPayload(w.labA.id), { recordedAt: deviceNow });
    // Device wall times run backwards across these readings; their order must come from the server, not from them.
    const rs = [0, 1, 2].map((i) => dev.change('reading', { runId: run.id, timeS: i * 10, pH: 3 + i }, { recordedAt: deviceNow - i * 60_000 }));
    const res = await push(w.deps, analyst, dev.batch([run, ...rs], deviceNow));
    expect(res.results.every((r) => r.outcome === 'accepted')).toBe(true);
    expect(res.clockFlagged).toBe(true);
    expect(res.clockOffsetMs).toBeCloseTo(skew, -3);
    const [flag] = await database.db.select().from(runClockFlags).where(eq(runClockFlags.runId, run.id));
    expect(Math.abs(flag.offsetMs)).toBeGreaterThan(CLOCK_FLAG_MS);
    const [device] = await database.db.select().from(devices).where(eq(devices.id, dev.id));
    expect(device.clockOffsetMs).toBeCloseTo(skew, -3);
    const stored = await database.db.select().from(readings).where(eq(readings.runId, run.id));
    expect(stored.map((r) => r.deviceRecordedAt?.getTime()).sort()).toEqual(rs.map((r) => r.recordedAt).sort());

    const pulled = await pull(w.deps, analyst, { cursor: 0, limit: 5000, runId: run.id });
    expect(pulled.changes.filter((c) => c.entity === 'reading').map((c) => (c.record as { id: string }).id)).toEqual(rs.map((r) => r.id));
    const runRec = pulled.changes.find((c) => c.entity === 'run')!.record as { clockOffsetMs: number | null };
    expect(runRec.clockOffsetMs).toBeCloseTo(skew, -3);
  });

  it('a device clock a few seconds off is not flagged', async () => {
    const analyst = await w.member(w.labA.id, 'analyst');
    const dev = fakeDevice();
    const res = await push(w.deps, analyst, dev.batch([dev.change('run', runPayload(w.labA.id))], w.nowMs() + 4000));
    expect(res.clockFlagged).toBe(false);
  });
});

describe('pull', () => {
  it('returns only the caller’s labs, after the cursor, and pages', async () => {
    const a = await w.member(w.labA.id, 'analyst');
    const colleague = await w.member(w.labA.id, 'viewer');
    const outsider = await w.member(w.labB.id, 'manager');
    const start = (await pull(w.deps, colleague, { cursor: 0, limit: 5000 })).cursor;
    const dev = fakeDevice();
    const run = dev.change('run', runPayload(w.labA.id));
    const rs = Array.from({ length: 5 }, (_, i) => dev.change('reading', { runId: run.id, timeS: i, pH: 4 }));
    await push(w.deps, a, dev.batch([run, ...rs]));

    const p1 = await pull(w.deps, colleague, { cursor: start, limit: 4 });
    expect(p1.more).toBe(true);
    const p2 = await pull(w.deps, colleague, { cursor: p1.cursor, limit: 4 });
    expect(p2.more).toBe(false);
    const ids = [...p1.changes, ...p2.changes].map((c) => (c.record as { id: string }).id);
    expect(ids).toEqual([run.id, ...rs.map((r) => r.id)]);
    expect((await pull(w.deps, colleague, { cursor: p2.cursor, limit: 10 })).changes).toEqual([]);

    const theirs = await pull(w.deps, outsider, { cursor: start, limit: 5000 });
    expect(theirs.changes.filter((c) => (c.record as { runId?: string; id: string }).id === run.id)).toEqual([]);
  });
});
