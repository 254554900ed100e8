import { eq } from 'drizzle-orm';
import { v7 } from 'uuid';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Database } from '../../db/client';
import { labs, readings, runs, users } from '../../db/schema';
import { closeTemplate, testDatabase } from '../testing/db';
import { insertReadingsIgnoringExisting, type ReadingInsert } from './sync';

// The readings insert sends times as epoch milliseconds and lets the database make them timestamptz (whole seconds
// through to_timestamp, the milliseconds added as an interval; ms / 1000 in one go came back a millisecond off for far
// dates). These checks need no outside values: what goes in must come back to the millisecond, on PGlite and on the
// PostgreSQL server of CI's parity run alike.

let database: Database;
let labId: string;
let userId: string;

beforeAll(async () => {
  database = await testDatabase();
  [{ id: labId }] = await database.db.insert(labs).values({ name: 'Insert check lab (test)' }).returning();
  [{ id: userId }] = await database.db.insert(users).values({ email: 'insert-check@example.org', displayName: 'Insert check' }).returning();
}, 300_000);
afterAll(async () => {
  await database.close();
  await closeTemplate();
});

async function newRun() {
  const id = v7();
  await database.db.insert(runs).values({ id, labId, analystId: userId, sampleName: 'insert check (test)' });
  return id;
}

// The span a device time may take (shared/schemas/sync.ts: 0 … the last millisecond of 9999).
const DEVICE_MS_MAX = Date.UTC(9999, 11, 31, 23, 59, 59, 999);

describe('insertReadingsIgnoringExisting: times', () => {
  it('stores every device time and the receipt time to the millisecond, nulls as null', async () => {
    const runId = await newRun();
    // Edges, times near now, and a spread over the whole span with every last digit of the milliseconds.
    const ms = [0, 1, 999, 1000, 1001, DEVICE_MS_MAX, DEVICE_MS_MAX - 1, Date.UTC(2026, 11, 2, 16, 0, 0, 123), Date.now()];
    let x = 88_172_645_463_325_252n; // xorshift64: the same spread on every run
    for (let i = 0; i < 3000; i++) {
      x ^= (x << 13n) & 0xffffffffffffffffn;
      x ^= x >> 7n;
      x ^= (x << 17n) & 0xffffffffffffffffn;
      ms.push(Number(x % BigInt(DEVICE_MS_MAX + 1)));
    }
    const receivedAt = new Date(Date.UTC(2026, 11, 2, 16, 30, 0, 7));
    const rows: ReadingInsert[] = ms.map((t, i) => ({ id: v7(), runId, labId, kind: 'reading', timeS: i, pH: 7, mV: null, deviceRecordedAt: new Date(t), receivedAt }));
    rows.push({ id: v7(), runId, labId, kind: 'reading', timeS: ms.length, pH: 7, mV: null, deviceRecordedAt: null, receivedAt });
    const done = await database.db.transaction((tx) => insertReadingsIgnoringExisting(tx, rows));
    expect(rows.every((r) => done.has(r.id))).toBe(true);

    const stored = new Map((await database.db.select().from(readings).where(eq(readings.runId, runId))).map((r) => [r.id, r]));
    expect(stored.size).toBe(rows.length);
    const wrong = rows.filter((r) => stored.get(r.id)!.deviceRecordedAt?.getTime() !== (r.deviceRecordedAt as Date | null)?.getTime());
    expect(wrong.map((r) => (r.deviceRecordedAt as Date | null)?.getTime())).toEqual([]);
    expect(stored.get(rows.at(-1)!.id)!.deviceRecordedAt).toBeNull();
    expect([...stored.values()].every((r) => r.receivedAt.getTime() === receivedAt.getTime())).toBe(true);
  });

  it('rows with receipt times of their own keep each', async () => {
    const runId = await newRun();
    const rows: ReadingInsert[] = [3, 2, 1].map((k) => ({ id: v7(), runId, labId, kind: 'reading', timeS: k, pH: 4, deviceRecordedAt: new Date(1_700_000_000_000 + k), receivedAt: new Date(1_800_000_000_000 + k * 1001) }));
    await database.db.transaction((tx) => insertReadingsIgnoringExisting(tx, rows));
    const stored = new Map((await database.db.select().from(readings).where(eq(readings.runId, runId))).map((r) => [r.id, r]));
    for (const r of rows) expect(stored.get(r.id)!.receivedAt.getTime()).toBe((r.receivedAt as Date).getTime());
  });
});
