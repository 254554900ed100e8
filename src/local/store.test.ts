// The local store on the SQLite build the browser runs (expo-sqlite's wa-sqlite, here in Node, in memory), behind
// a small adapter with the same async surface as expo-sqlite: one row per recording and its outbox entry in one
// statement, outbox payloads byte for byte what the sync sends (src/sync/changes.ts reads them back), refusals that
// leave nothing behind, and the automation bulk path.
import { readFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import path from 'node:path';
import { pathToFileURL } from 'node:url';
import { beforeEach, describe, expect, it } from 'vitest';
import { toChanges } from '../sync/changes';
import { MIGRATIONS, migrate } from './migrations';
import { LocalStore } from './store';
import type { MarkRow, OutboxRow } from './types';

// ---------- expo-sqlite's async surface over wa-sqlite ----------

type Params = (string | number | null)[];
interface Api {
  open_v2(name: string): Promise<number>;
  exec(db: number, sql: string): Promise<number>;
  statements(db: number, sql: string, o?: { unscoped?: boolean }): AsyncIterable<number>;
  bind_collection(stmt: number, p: Params): number;
  reset(stmt: number): Promise<number>;
  clear_bindings(stmt: number): number;
  step(stmt: number): Promise<number>;
  row(stmt: number): unknown[];
  column_names(stmt: number): string[];
  finalize(stmt: number): Promise<number>;
  changes(db: number): number;
}
const SQLITE_ROW = 100;

let api: Promise<Api> | null = null;
function waSqlite(): Promise<Api> {
  api ??= (async () => {
    const dir = path.resolve('node_modules/expo-sqlite/web/wa-sqlite');
    const { Factory } = await import(pathToFileURL(path.join(dir, 'sqlite-api.js')).href);
    const factory = createRequire(import.meta.url)(path.join(dir, 'wa-sqlite.js'));
    return Factory(await factory({ wasmBinary: readFileSync(path.join(dir, 'wa-sqlite.wasm')) })) as Api;
  })();
  return api;
}

/** Like expo-sqlite on the web: `executeAsync` resets, binds and steps once (what its worker's `run` does). */
async function openTestDb() {
  const s = await waSqlite();
  const db = await s.open_v2(':memory:');
  const prepare = async (sql: string) => {
    let stmt = 0;
    for await (const p of s.statements(db, sql, { unscoped: true })) {
      stmt = p;
      break;
    }
    if (!stmt) throw new Error('Failed to prepare statement');
    let failed = false;
    return {
      async executeAsync(...params: Params) {
        // A statement whose last step failed reports that failure again on reset (as in the browser worker).
        if (failed) await s.reset(stmt);
        s.clear_bindings(stmt);
        if (params.length) s.bind_collection(stmt, params);
        try {
          await s.step(stmt);
        } catch (e) {
          failed = true;
          throw e;
        }
        await s.reset(stmt);
        return { changes: s.changes(db) };
      },
      async all(...params: Params) {
        if (params.length) s.bind_collection(stmt, params);
        const names = s.column_names(stmt);
        const rows: Record<string, unknown>[] = [];
        while ((await s.step(stmt)) === SQLITE_ROW) rows.push(Object.fromEntries(s.row(stmt).map((v, i) => [names[i], v])));
        return rows;
      },
      async finalizeAsync() {
        await s.finalize(stmt);
      },
    };
  };
  const all = async (sql: string, params: Params) => {
    const st = await prepare(sql);
    try {
      return await st.all(...params);
    } finally {
      await st.finalizeAsync();
    }
  };
  const adapter = {
    execAsync: async (sql: string) => void (await s.exec(db, sql)),
    prepareAsync: prepare,
    runAsync: async (sql: string, ...params: Params) => {
      const st = await prepare(sql);
      try {
        return await st.executeAsync(...params);
      } finally {
        await st.finalizeAsync();
      }
    },
    getAllAsync: (sql: string, ...params: Params) => all(sql, params),
    getFirstAsync: async (sql: string, ...params: Params) => (await all(sql, params))[0] ?? null,
  };
  // The store's Db type is a Pick of expo-sqlite's class; this adapter has the parts it calls.
  return adapter as unknown as Parameters<typeof LocalStore.open>[0] & { getAllAsync<T>(sql: string, ...p: Params): Promise<T[]> };
}

// ---------- tests ----------

let db: Awaited<ReturnType<typeof openTestDb>>;
let store: LocalStore;
const count = async (table: string) => ((await db.getFirstAsync<{ n: number }>(`SELECT count(*) AS n FROM ${table}`)) as { n: number }).n;
const outbox = async () => store.pendingOutbox(10_000);
const rawPayloads = async () => (await db.getAllAsync<{ entity: string; payload_json: string }>('SELECT entity, payload_json FROM outbox ORDER BY seq')).map((r) => r.payload_json);

async function startedRun() {
  const run = await store.createRun({ label: 'Demo: store test', setup: { demo: true } });
  await store.addEvent(run.id, 'start', { monoMs: 1000, wallMs: Date.now() });
  return run;
}

beforeEach(async () => {
  db = await openTestDb();
  expect(await migrate(db)).toBe(MIGRATIONS[MIGRATIONS.length - 1].version);
  store = await LocalStore.open(db);
});

describe('local store', () => {
  it('records a mark and its reading as one statement each, with outbox payloads exactly the JSON of the rows', async () => {
    const run = await startedRun();
    const before = (await outbox()).length;
    // A run time with 17 significant digits: SQLite's own JSON would print 15 and change it.
    const timeS = 1234.5678901234567;
    const m = await store.addMark(run.id, 'reading', timeS, { monoMs: 1_235_678.901, wallMs: 1_700_000_000_123 });
    const r = await store.addReading(m, { pH: 4.7563, mV: null, pHSource: 'typed' });
    expect(await count('marks')).toBe(1);
    expect(await count('readings')).toBe(1);
    const raw = (await rawPayloads()).slice(before);
    expect(raw).toEqual([JSON.stringify(m), JSON.stringify(r)]);
    expect(JSON.parse(raw[1]).timeS).toBe(timeS);
    const rows = (await outbox()).slice(before);
    expect(rows.map((o) => [o.entity, o.recordId, o.op, o.state])).toEqual([
      ['mark', m.id, 'insert', 'pending'],
      ['reading', r.id, 'insert', 'pending'],
    ]);
    // The sync is handed the reading decoded, the mark without its payload (it never goes out; its JSON stays queued).
    expect(rows.map((o) => o.payload)).toEqual([null, r]);
    // What the sync makes of them: the mark stays local, the reading goes out with the mark's time.
    const ctx = { deviceId: store.device.id, runLab: async () => 'lab-1' };
    expect(await toChanges(rows[0], ctx)).toEqual({ kind: 'local-only' });
    const sent = await toChanges(rows[1], ctx);
    expect(sent.kind === 'send' && sent.changes[0]).toMatchObject({ kind: 'reading', id: r.id, payload: { runId: run.id, timeS, pH: 4.7563, mV: null } });
    // The stored row reads back as recorded.
    const rec = await store.loadRun(run.id);
    expect(rec?.readings).toEqual([r]);
    expect(rec?.marks).toEqual([m]);
  });

  it('a clock event moves the run status and queues the run update in the same statement; other events do not', async () => {
    const run = await store.createRun({ label: 'Demo', setup: {} });
    const start = await store.addEvent(run.id, 'start', { monoMs: 5, wallMs: 1_700_000_000_000 });
    await store.addEvent(run.id, 'refill', { monoMs: 6, wallMs: 1_700_000_000_001 }, { atS: 1, beforeMl: 40, afterMl: 0.5 });
    const rows = await outbox();
    expect(rows.map((o) => [o.entity, o.op])).toEqual([
      ['run', 'insert'],
      ['run_event', 'insert'],
      ['run', 'update'],
      ['run_event', 'insert'],
    ]);
    expect(rows[1].payload).toEqual(start);
    expect(rows[2].payload).toEqual({ id: run.id, status: 'running' });
    const rec = await store.loadRun(run.id);
    expect(rec?.run.status).toBe('running');
    expect(rec?.run.localVersion).toBe(2);
    expect(rec?.events.map((e) => e.data)).toEqual([null, { atS: 1, beforeMl: 40, afterMl: 0.5 }]);
  });

  it('refuses a value whose mark is not on this device, and a second value for one mark, leaving nothing behind', async () => {
    const run = await startedRun();
    const m = await store.addMark(run.id, 'reading', 3, { monoMs: 4000, wallMs: 1 });
    await store.addReading(m, { pH: 3.1, mV: null, pHSource: 'typed' });
    const [readings, queued] = [await count('readings'), (await outbox()).length];
    const ghost: MarkRow = { ...m, id: 'no-such-mark' };
    await expect(store.addReading(ghost, { pH: 3.2, mV: null, pHSource: 'typed' })).rejects.toThrow(/mark of this value is not on this device/);
    await expect(store.addReading(m, { pH: 3.3, mV: null, pHSource: 'typed' })).rejects.toThrow(/UNIQUE/);
    await expect(store.addCheckpoint(ghost, 12.5)).rejects.toThrow(/not on this device/);
    await expect(store.addMark('no-such-run', 'reading', 1, { monoMs: 1, wallMs: 1 })).rejects.toThrow(/run is not on this device/);
    expect(await count('readings')).toBe(readings);
    expect((await outbox()).length).toBe(queued);
    // The statement that failed is not reused in its failed state: the next recording goes through.
    const m2 = await store.addMark(run.id, 'reading', 4, { monoMs: 5000, wallMs: 2 });
    await store.addReading(m2, { pH: 3.4, mV: null, pHSource: 'typed' });
    expect(await count('readings')).toBe(readings + 1);
  });

  it('gives the row at once and saves in order: a value typed before its mark committed is stored after it', async () => {
    const run = await startedRun();
    const mark = store.recordMark(run.id, 'reading', 7.25, { monoMs: 8250, wallMs: 3 });
    // Nothing awaited yet: the mark's row is known, its write is queued.
    expect(mark.row).toMatchObject({ runId: run.id, kind: 'reading', timeS: 7.25 });
    const value = store.recordReading(mark.row, { pH: 5.5, mV: null, pHSource: 'typed' });
    expect(value.row).toMatchObject({ markId: mark.row.id, timeS: 7.25, pH: 5.5 });
    expect(await mark.saved).toBe(mark.row);
    expect(await value.saved).toBe(value.row);
    expect((await store.loadRun(run.id))?.readings).toEqual([value.row]);
  });

  it('tells the sync after each recording write, not after its own writes', async () => {
    const run = await startedRun();
    let calls = 0;
    const off = store.onCommitted(() => calls++);
    const m = await store.addMark(run.id, 'reading', 1, { monoMs: 2000, wallMs: 1 });
    await store.addReading(m, { pH: 3, mV: null, pHSource: 'typed' });
    await store.syncWrite((d) => d.runAsync("UPDATE outbox SET state = 'acked' WHERE seq = 1"));
    await store.addReading(m, { pH: 3, mV: null, pHSource: 'typed' }).catch(() => undefined); // refused: no call
    await Promise.resolve();
    expect(calls).toBe(2);
    off();
  });

  it('keeps corrections as new rows with their reason', async () => {
    const run = await startedRun();
    const m = await store.addMark(run.id, 'reading', 2, { monoMs: 3000, wallMs: 1 });
    const r = await store.addReading(m, { pH: 3.01, mV: null, pHSource: 'typed' });
    expect(() => store.correctReading(r, { pH: 3.1, mV: null, pHSource: 'typed' }, '  ')).toThrow(/reason/);
    const fix = await store.correctReading(r, { pH: 3.1, mV: null, pHSource: 'typed' }, 'misread the meter');
    const del = await store.deleteReading(fix, 'bubble on the electrode');
    const rows = (await outbox()).filter((o) => o.entity === 'reading');
    expect(rows.map((o) => o.payload)).toEqual([r, fix, del]);
    expect(del).toMatchObject({ replacesId: fix.id, voided: true, pH: null, pHSource: 'void', timeS: 2 });
  });

  it('seeds many rows in one transaction for automation, with the same rows and outbox entries, or none at all', async () => {
    const run = await startedRun();
    const before = (await outbox()).length;
    await store.recordManyForAutomation(async (rec) => {
      for (let i = 0; i < 50; i++) {
        const m = await rec.mark(run.id, 'reading', 1 + i * 1.5, { monoMs: 2000 + i * 1500, wallMs: 1 });
        await rec.reading(m, { pH: 3 + i / 10, mV: null, pHSource: 'typed' });
      }
    });
    const rows: OutboxRow[] = (await outbox()).slice(before);
    expect(rows).toHaveLength(100);
    expect(rows.map((o) => o.entity).slice(0, 4)).toEqual(['mark', 'reading', 'mark', 'reading']);
    const rec = await store.loadRun(run.id);
    expect(rec?.readings).toHaveLength(50);
    expect(rows.filter((o) => o.entity === 'reading').map((o) => o.payload)).toEqual(rec?.readings);

    // A failure part-way rolls the whole batch back.
    await expect(
      store.recordManyForAutomation(async (rec2) => {
        const m = await rec2.mark(run.id, 'reading', 200, { monoMs: 1, wallMs: 1 });
        await rec2.reading(m, { pH: 4, mV: null, pHSource: 'typed' });
        await rec2.reading(m, { pH: 4, mV: null, pHSource: 'typed' }); // second original for one mark
      }),
    ).rejects.toThrow(/UNIQUE/);
    expect(await count('readings')).toBe(50);
    expect(await count('marks')).toBe(50);
    expect((await outbox()).length).toBe(before + 100);
  });
});
